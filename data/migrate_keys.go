package data

import (
	"context"
	"database/sql"
	"fmt"
)

// backfillStructureKeys is data migration 7: monomers stored before structure keys existed get
// theirs, so that duplicates among them are found too.
func (s *Store) backfillStructureKeys(ctx context.Context, tx *sql.Tx) error {
	rows, err := tx.QueryContext(ctx, s.q(`SELECT id, smiles FROM monomers WHERE structure_key = '' AND smiles <> ''`))
	if err != nil {
		return fmt.Errorf("structure keys: %w", err)
	}
	type row struct{ id, smi string }
	var todo []row
	for rows.Next() {
		var r row
		if err := rows.Scan(&r.id, &r.smi); err != nil {
			rows.Close()
			return err
		}
		todo = append(todo, r)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return err
	}
	for _, r := range todo {
		if _, err := tx.ExecContext(ctx, s.q(`UPDATE monomers SET structure_key = ? WHERE id = ?`), structureKey(r.smi), r.id); err != nil {
			return fmt.Errorf("structure key of %s: %w", r.id, err)
		}
	}
	return nil
}
