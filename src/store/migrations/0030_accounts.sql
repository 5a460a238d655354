-- Accounts, sessions, API tokens and the audit trail (issue 14).
-- Passwords are stored only as scrypt hashes with their salt and parameters
-- ("scrypt$N$r$p$<salt b64url>$<hash b64url>"); API tokens only as the SHA-256 of the token.
-- Sessions are server-side rows (so logout and disabling an account end them at once); the cookie
-- carries the session id, signed.
CREATE TABLE users (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  username TEXT NOT NULL UNIQUE COLLATE NOCASE CHECK (length(trim(username)) > 0),
  display_name TEXT NOT NULL CHECK (length(trim(display_name)) > 0),
  role TEXT NOT NULL CHECK (role IN ('viewer', 'engineer', 'approver', 'admin')),
  password_hash TEXT NOT NULL CHECK (password_hash LIKE 'scrypt$%'),
  must_change_password INTEGER NOT NULL DEFAULT 0 CHECK (must_change_password IN (0, 1)),
  disabled INTEGER NOT NULL DEFAULT 0 CHECK (disabled IN (0, 1)),
  created_at_ms INTEGER NOT NULL
);

CREATE TABLE sessions (
  id TEXT PRIMARY KEY CHECK (length(id) = 64),
  user_id INTEGER NOT NULL REFERENCES users(id),
  created_at_ms INTEGER NOT NULL,
  expires_at_ms INTEGER NOT NULL
);
CREATE INDEX sessions_user ON sessions(user_id);

CREATE TABLE api_tokens (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  user_id INTEGER NOT NULL REFERENCES users(id),
  name TEXT NOT NULL CHECK (length(trim(name)) > 0),
  scope TEXT NOT NULL CHECK (scope IN ('read', 'import', 'signoff')),
  token_sha256 TEXT NOT NULL UNIQUE CHECK (length(token_sha256) = 64),
  created_at_ms INTEGER NOT NULL,
  revoked_at_ms INTEGER,
  last_used_at_ms INTEGER
);

-- Every state change: who (the account, or the open mode's named person, or the CLI's user), when,
-- what, on what, with details. Append-only: rows are never changed or removed.
CREATE TABLE audit_log (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  at_ms INTEGER NOT NULL,
  actor TEXT NOT NULL CHECK (length(trim(actor)) > 0),
  user_id INTEGER REFERENCES users(id),
  via TEXT NOT NULL CHECK (via IN ('session', 'token', 'open', 'cli', 'system')),
  action TEXT NOT NULL,
  subject TEXT,
  detail_json TEXT NOT NULL DEFAULT '{}'
);
CREATE INDEX audit_log_at ON audit_log(at_ms);

CREATE TRIGGER audit_log_no_update BEFORE UPDATE ON audit_log
BEGIN
  SELECT RAISE(ABORT, 'the audit trail is append-only: an entry is never changed');
END;

CREATE TRIGGER audit_log_no_delete BEFORE DELETE ON audit_log
BEGIN
  SELECT RAISE(ABORT, 'the audit trail is append-only: an entry is never deleted');
END;
