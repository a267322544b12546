package data

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"errors"
	"fmt"
	"strings"
	"time"
)

// APIKey is a stored key (the secret is never stored, only its SHA-256).
type APIKey struct {
	ID        string    `json:"id"`
	Name      string    `json:"name"`
	CreatedAt time.Time `json:"created_at"`
	Revoked   bool      `json:"revoked"`
}

func hashKey(secret string) string {
	h := sha256.Sum256([]byte(secret))
	return hex.EncodeToString(h[:])
}

// CreateAPIKey makes a key and returns it with its secret, shown once.
func (s *Store) CreateAPIKey(ctx context.Context, name string) (APIKey, string, error) {
	var b [24]byte
	if _, err := rand.Read(b[:]); err != nil {
		return APIKey{}, "", err
	}
	secret := "rsk_" + hex.EncodeToString(b[:])
	k := APIKey{ID: newID("key_"), Name: name}
	ts := now()
	if _, err := s.db.ExecContext(ctx, s.q(`INSERT INTO api_keys (id, name, hash, created_at) VALUES (?, ?, ?, ?)`), k.ID, name, hashKey(secret), ts); err != nil {
		return APIKey{}, "", fmt.Errorf("create key: %w", s.fault(err))
	}
	k.CreatedAt = parseTime(ts)
	return k, secret, nil
}

// CheckAPIKey returns the id of the unrevoked key with this secret, or ErrNotFound.
func (s *Store) CheckAPIKey(ctx context.Context, secret string) (string, error) {
	if !strings.HasPrefix(secret, "rsk_") {
		return "", ErrNotFound
	}
	var id string
	err := s.db.QueryRowContext(ctx, s.q(`SELECT id FROM api_keys WHERE hash = ? AND revoked_at = ''`), hashKey(secret)).Scan(&id)
	if errors.Is(err, sql.ErrNoRows) {
		return "", ErrNotFound
	}
	return id, err
}

// ListAPIKeys lists keys (never secrets).
func (s *Store) ListAPIKeys(ctx context.Context) ([]APIKey, error) {
	rows, err := s.db.QueryContext(ctx, `SELECT id, name, created_at, revoked_at FROM api_keys ORDER BY created_at`)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	out := []APIKey{}
	for rows.Next() {
		var k APIKey
		var created, revoked string
		if err := rows.Scan(&k.ID, &k.Name, &created, &revoked); err != nil {
			return nil, err
		}
		k.CreatedAt, k.Revoked = parseTime(created), revoked != ""
		out = append(out, k)
	}
	return out, rows.Err()
}

// RevokeAPIKey revokes a key by id.
func (s *Store) RevokeAPIKey(ctx context.Context, id string) error {
	res, err := s.db.ExecContext(ctx, s.q(`UPDATE api_keys SET revoked_at = ? WHERE id = ? AND revoked_at = ''`), now(), id)
	if err != nil {
		return s.fault(err)
	}
	if n, err := res.RowsAffected(); err != nil {
		return err
	} else if n == 0 {
		return fmt.Errorf("key %q: %w", id, ErrNotFound)
	}
	return nil
}
