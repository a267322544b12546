package data

import "context"

// SharedRateLimits reports whether per-key rate limits live in the database (PostgreSQL: one
// bucket per key for every replica). On SQLite the single process keeps them in memory.
func (s *Store) SharedRateLimits() bool { return s.dialect.name == "postgres" }

// TakeToken takes one request from the token bucket of an API key, shared by every process on
// the database: the bucket holds up to burst tokens and refills at perSecond, on the database
// server's clock (so replicas' clocks do not matter). It reports whether the request may go on;
// a refused request takes nothing. PostgreSQL only.
func (s *Store) TakeToken(ctx context.Context, keyID string, perSecond float64, burst int) (bool, error) {
	var ok bool
	err := s.db.QueryRowContext(ctx, `
WITH now_ms AS (SELECT (extract(epoch FROM clock_timestamp()) * 1000)::bigint AS t)
INSERT INTO rate_buckets AS b (key_id, tokens, updated_ms, allowed)
	SELECT $1, $2::float8 - 1, t, true FROM now_ms
ON CONFLICT (key_id) DO UPDATE SET
	tokens = CASE WHEN least($2::float8, b.tokens + (EXCLUDED.updated_ms - b.updated_ms) * $3::float8 / 1000) >= 1
		THEN least($2::float8, b.tokens + (EXCLUDED.updated_ms - b.updated_ms) * $3::float8 / 1000) - 1
		ELSE least($2::float8, b.tokens + (EXCLUDED.updated_ms - b.updated_ms) * $3::float8 / 1000) END,
	allowed = least($2::float8, b.tokens + (EXCLUDED.updated_ms - b.updated_ms) * $3::float8 / 1000) >= 1,
	updated_ms = EXCLUDED.updated_ms
RETURNING allowed`, keyID, float64(burst), perSecond).Scan(&ok)
	if err != nil {
		return false, s.fault(err)
	}
	return ok, nil
}
