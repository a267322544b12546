package data

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"strings"
	"time"

	"ringsieve/screening"
)

// likeEscaper escapes the wildcards of a LIKE pattern (escape character backslash).
var likeEscaper = strings.NewReplacer(`\`, `\\`, "%", `\%`, "_", `\_`)

// Monomer is a stored monomer.
type Monomer struct {
	ID          string          `json:"id"`
	Name        string          `json:"name"`
	SMILES      string          `json:"smiles,omitempty"`
	Descriptors json.RawMessage `json:"descriptors,omitempty" swaggertype:"object"`
	Tags        []string        `json:"tags"`
	Version     int             `json:"version"`
	CreatedAt   time.Time       `json:"created_at"`
	UpdatedAt   time.Time       `json:"updated_at"`
	// AllowDuplicate stores the monomer even when another holds the same structure.
	AllowDuplicate bool `json:"-"`
}

// ErrDuplicate matches a monomer whose structure another stored monomer already has.
var ErrDuplicate = errors.New("the same structure is already stored")

// DuplicateError names the monomer that already holds the structure.
type DuplicateError struct{ ExistingID, ExistingName string }

func (e *DuplicateError) Error() string {
	return fmt.Sprintf("the same structure is already stored as %s (%q); send allow_duplicate: true to store it again", e.ExistingID, e.ExistingName)
}

// Is makes every DuplicateError match ErrDuplicate.
func (e *DuplicateError) Is(target error) bool { return target == ErrDuplicate }

// structureKey is the canonical key of a monomer's SMILES ("" for a descriptor record or a
// SMILES that does not parse, which validation has refused before).
func structureKey(smi string) string {
	if smi == "" {
		return ""
	}
	k, err := screening.StructureKey(smi)
	if err != nil {
		return ""
	}
	return k
}

// checkDuplicate refuses a structure another monomer (not except) already holds.
func (s *Store) checkDuplicate(ctx context.Context, tx *sql.Tx, key, except string) error {
	if key == "" {
		return nil
	}
	var id, name string
	err := s.queryRow(ctx, tx, `SELECT id, name FROM monomers WHERE structure_key = ? AND id <> ? ORDER BY created_at LIMIT 1`, key, except).Scan(&id, &name)
	if errors.Is(err, sql.ErrNoRows) {
		return nil
	}
	if err != nil {
		return err
	}
	return &DuplicateError{ExistingID: id, ExistingName: name}
}

func normTags(tags []string) []string {
	set := map[string]bool{}
	out := []string{}
	for _, t := range tags {
		t = strings.TrimSpace(t)
		if t != "" && !set[t] {
			set[t] = true
			out = append(out, t)
		}
	}
	sort.Strings(out)
	return out
}

func descText(d json.RawMessage) string {
	if len(d) == 0 {
		return "null"
	}
	return string(d)
}

// CreateMonomer stores a new monomer and returns it with its id, version 1 and timestamps.
func (s *Store) CreateMonomer(ctx context.Context, m Monomer) (Monomer, error) {
	m.ID = newID("mon_")
	m.Tags = normTags(m.Tags)
	m.Version = 1
	ts := now()
	key := structureKey(m.SMILES)
	err := s.tx(ctx, func(tx *sql.Tx) error {
		if !m.AllowDuplicate {
			if err := s.checkDuplicate(ctx, tx, key, ""); err != nil {
				return err
			}
		}
		if _, err := s.exec(ctx, tx, `INSERT INTO monomers (id, name, smiles, descriptors, version, created_at, updated_at, structure_key) VALUES (?, ?, ?, ?, 1, ?, ?, ?)`,
			m.ID, m.Name, m.SMILES, descText(m.Descriptors), ts, ts, key); err != nil {
			return err
		}
		if err := s.insertTags(ctx, tx, m.ID, m.Tags); err != nil {
			return err
		}
		return s.claimIdempotency(ctx, tx, m.ID)
	})
	if err != nil {
		return Monomer{}, fmt.Errorf("create monomer: %w", err)
	}
	m.CreatedAt, m.UpdatedAt = parseTime(ts), parseTime(ts)
	return m, nil
}

func (s *Store) insertTags(ctx context.Context, tx *sql.Tx, id string, tags []string) error {
	for _, t := range tags {
		if _, err := s.exec(ctx, tx, `INSERT INTO monomer_tags (monomer_id, tag) VALUES (?, ?)`, id, t); err != nil {
			return err
		}
	}
	return nil
}

type rowScanner interface{ Scan(...any) error }

func scanMonomer(r rowScanner) (Monomer, error) {
	var m Monomer
	var desc, created, updated, tags string
	if err := r.Scan(&m.ID, &m.Name, &m.SMILES, &desc, &m.Version, &created, &updated, &tags); err != nil {
		return Monomer{}, err
	}
	if desc != "null" {
		m.Descriptors = json.RawMessage(desc)
	}
	m.CreatedAt, m.UpdatedAt = parseTime(created), parseTime(updated)
	m.Tags = []string{}
	if tags != "" {
		m.Tags = strings.Split(tags, "\x1f")
		sort.Strings(m.Tags)
	}
	return m, nil
}

func (s *Store) monomerCols() string {
	return `m.id, m.name, m.smiles, m.descriptors, m.version, m.created_at, m.updated_at, ` + s.dialect.tagList
}

// GetMonomer returns the monomer with id, or ErrNotFound.
func (s *Store) GetMonomer(ctx context.Context, id string) (Monomer, error) {
	m, err := scanMonomer(s.db.QueryRowContext(ctx, s.q(`SELECT `+s.monomerCols()+` FROM monomers m WHERE m.id = ?`), id))
	if errors.Is(err, sql.ErrNoRows) {
		return Monomer{}, fmt.Errorf("monomer %q: %w", id, ErrNotFound)
	}
	if err != nil {
		return Monomer{}, fmt.Errorf("get monomer: %w", err)
	}
	return m, nil
}

// MonomerFilter selects monomers for listing.
type MonomerFilter struct {
	Tag    string // exact tag
	Name   string // case-insensitive substring of the name
	Limit  int    // 1..500
	Offset int
}

// ListMonomers returns one page of monomers, newest first, and the total matching.
func (s *Store) ListMonomers(ctx context.Context, f MonomerFilter) ([]Monomer, int, error) {
	var where []string
	var args []any
	if f.Tag != "" {
		where = append(where, `EXISTS (SELECT 1 FROM monomer_tags t WHERE t.monomer_id = m.id AND t.tag = ?)`)
		args = append(args, f.Tag)
	}
	if f.Name != "" {
		where = append(where, `lower(m.name) LIKE ? ESCAPE '\'`)
		args = append(args, "%"+likeEscaper.Replace(strings.ToLower(f.Name))+"%")
	}
	cond := ""
	if len(where) > 0 {
		cond = " WHERE " + strings.Join(where, " AND ")
	}
	var total int
	if err := s.db.QueryRowContext(ctx, s.q(`SELECT count(*) FROM monomers m`+cond), args...).Scan(&total); err != nil {
		return nil, 0, fmt.Errorf("count monomers: %w", err)
	}
	rows, err := s.db.QueryContext(ctx, s.q(`SELECT `+s.monomerCols()+` FROM monomers m`+cond+` ORDER BY m.created_at DESC, m.id LIMIT ? OFFSET ?`),
		append(args, f.Limit, f.Offset)...)
	if err != nil {
		return nil, 0, fmt.Errorf("list monomers: %w", err)
	}
	defer rows.Close()
	out := []Monomer{}
	for rows.Next() {
		m, err := scanMonomer(rows)
		if err != nil {
			return nil, 0, fmt.Errorf("list monomers: %w", err)
		}
		out = append(out, m)
	}
	return out, total, rows.Err()
}

// ReplaceMonomer replaces name, SMILES, descriptors and tags of monomer id. When ifVersion > 0
// the replace happens only if the stored version matches (else ErrConflict). The version is
// bumped.
func (s *Store) ReplaceMonomer(ctx context.Context, id string, m Monomer, ifVersion int) (Monomer, error) {
	m.Tags = normTags(m.Tags)
	ts := now()
	var out Monomer
	err := s.tx(ctx, func(tx *sql.Tx) error {
		var ver int
		var created string
		err := s.queryRow(ctx, tx, `SELECT version, created_at FROM monomers WHERE id = ?`, id).Scan(&ver, &created)
		if errors.Is(err, sql.ErrNoRows) {
			return fmt.Errorf("monomer %q: %w", id, ErrNotFound)
		}
		if err != nil {
			return err
		}
		if ifVersion > 0 && ver != ifVersion {
			return fmt.Errorf("monomer %q is at version %d, not %d: %w", id, ver, ifVersion, ErrConflict)
		}
		key := structureKey(m.SMILES)
		if !m.AllowDuplicate {
			if err := s.checkDuplicate(ctx, tx, key, id); err != nil {
				return err
			}
		}
		if _, err := s.exec(ctx, tx, `UPDATE monomers SET name = ?, smiles = ?, descriptors = ?, version = version + 1, updated_at = ?, structure_key = ? WHERE id = ?`,
			m.Name, m.SMILES, descText(m.Descriptors), ts, key, id); err != nil {
			return err
		}
		if _, err := s.exec(ctx, tx, `DELETE FROM monomer_tags WHERE monomer_id = ?`, id); err != nil {
			return err
		}
		if err := s.insertTags(ctx, tx, id, m.Tags); err != nil {
			return err
		}
		out = m
		out.ID, out.Version = id, ver+1
		out.CreatedAt, out.UpdatedAt = parseTime(created), parseTime(ts)
		return nil
	})
	if err != nil {
		return Monomer{}, fmt.Errorf("replace monomer: %w", err)
	}
	return out, nil
}

// DeleteMonomer removes monomer id and its saved results.
func (s *Store) DeleteMonomer(ctx context.Context, id string) error {
	return s.tx(ctx, func(tx *sql.Tx) error {
		res, err := s.exec(ctx, tx, `DELETE FROM monomers WHERE id = ?`, id)
		if err != nil {
			return fmt.Errorf("delete monomer: %w", err)
		}
		if n, err := res.RowsAffected(); err != nil {
			return err
		} else if n == 0 {
			return fmt.Errorf("monomer %q: %w", id, ErrNotFound)
		}
		return nil
	})
}

// SavedResult is a screening result stored against a monomer.
type SavedResult struct {
	ID            int64           `json:"id"`
	MonomerID     string          `json:"monomer_id"`
	Conditions    json.RawMessage `json:"conditions" swaggertype:"object"`
	Verdict       string          `json:"verdict"`
	Score         float64         `json:"score"`
	Result        json.RawMessage `json:"result" swaggertype:"object"`
	EngineVersion string          `json:"engine_version"`
	CreatedAt     time.Time       `json:"created_at"`
	// MonomerVersion and MonomerSMILES are the monomer as it was screened.
	MonomerVersion int    `json:"monomer_version"`
	MonomerSMILES  string `json:"monomer_smiles,omitempty"`
}

// SaveResult stores a result for monomer r.MonomerID (ErrNotFound when it does not exist).
func (s *Store) SaveResult(ctx context.Context, r SavedResult) (SavedResult, error) {
	ts := now()
	err := s.tx(ctx, func(tx *sql.Tx) error {
		if err := s.queryRow(ctx, tx, `SELECT version, smiles FROM monomers WHERE id = ?`, r.MonomerID).Scan(&r.MonomerVersion, &r.MonomerSMILES); err != nil {
			if errors.Is(err, sql.ErrNoRows) {
				return fmt.Errorf("monomer %q: %w", r.MonomerID, ErrNotFound)
			}
			return err
		}
		if err := s.queryRow(ctx, tx, `INSERT INTO results (monomer_id, conditions, verdict, score, result, engine_version, created_at, monomer_version, monomer_smiles) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id`,
			r.MonomerID, string(r.Conditions), r.Verdict, r.Score, string(r.Result), r.EngineVersion, ts, r.MonomerVersion, r.MonomerSMILES).Scan(&r.ID); err != nil {
			return err
		}
		return s.claimIdempotency(ctx, tx, fmt.Sprintf("result:%d", r.ID))
	})
	if err != nil {
		return SavedResult{}, fmt.Errorf("save result: %w", err)
	}
	r.CreatedAt = parseTime(ts)
	return r, nil
}

// ListResults returns the saved results of a monomer, newest first (ErrNotFound when the
// monomer does not exist).
func (s *Store) ListResults(ctx context.Context, monomerID string, limit int) ([]SavedResult, error) {
	if _, err := s.GetMonomer(ctx, monomerID); err != nil {
		return nil, err
	}
	rows, err := s.db.QueryContext(ctx, s.q(`SELECT id, monomer_id, conditions, verdict, score, result, engine_version, created_at, monomer_version, monomer_smiles FROM results WHERE monomer_id = ? ORDER BY id DESC LIMIT ?`), monomerID, limit)
	if err != nil {
		return nil, fmt.Errorf("list results: %w", err)
	}
	defer rows.Close()
	out := []SavedResult{}
	for rows.Next() {
		var r SavedResult
		var cond, res, created string
		if err := rows.Scan(&r.ID, &r.MonomerID, &cond, &r.Verdict, &r.Score, &res, &r.EngineVersion, &created, &r.MonomerVersion, &r.MonomerSMILES); err != nil {
			return nil, fmt.Errorf("list results: %w", err)
		}
		r.Conditions, r.Result, r.CreatedAt = json.RawMessage(cond), json.RawMessage(res), parseTime(created)
		out = append(out, r)
	}
	return out, rows.Err()
}

// MonomerSource implements batch.Store: a stored monomer's SMILES when it has one, else its
// descriptor record.
func (s *Store) MonomerSource(ctx context.Context, id string) (screening.Source, error) {
	m, err := s.GetMonomer(ctx, id)
	if err != nil {
		return screening.Source{}, err
	}
	return SourceOf(m)
}

// SourceOf returns the screening source of a stored monomer.
func SourceOf(m Monomer) (screening.Source, error) {
	if m.SMILES != "" {
		return screening.Source{SMILES: m.SMILES}, nil
	}
	var d screening.Descriptors
	if err := json.Unmarshal(m.Descriptors, &d); err != nil {
		return screening.Source{}, fmt.Errorf("stored descriptors of %s: %w", m.ID, err)
	}
	return screening.Source{Descriptors: &d}, nil
}

// GetSavedResult returns a saved result by its resource name ("result:ID"), or ErrNotFound.
func (s *Store) GetSavedResult(ctx context.Context, resource string) (SavedResult, error) {
	var r SavedResult
	var cond, res, created string
	id, ok := strings.CutPrefix(resource, "result:")
	if !ok {
		return r, fmt.Errorf("saved result %q: %w", resource, ErrNotFound)
	}
	err := s.db.QueryRowContext(ctx, s.q(`SELECT id, monomer_id, conditions, verdict, score, result, engine_version, created_at FROM results WHERE id = ?`), id).
		Scan(&r.ID, &r.MonomerID, &cond, &r.Verdict, &r.Score, &res, &r.EngineVersion, &created)
	if errors.Is(err, sql.ErrNoRows) {
		return r, fmt.Errorf("saved result %q: %w", resource, ErrNotFound)
	}
	if err != nil {
		return r, fmt.Errorf("get saved result: %w", err)
	}
	r.Conditions, r.Result, r.CreatedAt = json.RawMessage(cond), json.RawMessage(res), parseTime(created)
	return r, nil
}
