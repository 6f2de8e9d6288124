-- People who sign in, the API tokens they hold, and the append-only audit
-- trail of every change (ISO/IEC 17025:2017 7.5.2: who changed what, when,
-- with the original kept).

-- Roles: technician (records runs), reviewer (checks and approves other
-- people's runs), administrator (equipment, users, lab settings).
CREATE TABLE app_user (
    id            INTEGER PRIMARY KEY,
    username      TEXT    NOT NULL UNIQUE
                          CHECK (length(username) BETWEEN 1 AND 64),
    display_name  TEXT    NOT NULL CHECK (length(trim(display_name)) > 0),
    role          TEXT    NOT NULL
                          CHECK (role IN ('technician', 'reviewer', 'administrator')),
    -- argon2id hash in PHC string format; never the password itself.
    password_hash TEXT    NOT NULL,
    active        BOOLEAN NOT NULL DEFAULT TRUE,
    created_at    TEXT    NOT NULL
);

-- Bearer tokens for other systems. Only the SHA-256 of the secret is kept;
-- the secret is shown once, when the token is created.
CREATE TABLE api_token (
    id          INTEGER PRIMARY KEY,
    user_id     INTEGER NOT NULL REFERENCES app_user (id),
    name        TEXT    NOT NULL CHECK (length(trim(name)) > 0),
    token_hash  TEXT    NOT NULL UNIQUE,
    -- 'read' allows GET; 'write' allows GET and changes (as the user's role permits).
    scope       TEXT    NOT NULL CHECK (scope IN ('read', 'write')),
    created_at  TEXT    NOT NULL,
    revoked_at  TEXT
);

-- One row per change, in order. Each row holds the hash of the row before
-- it, so any later edit of a row breaks the chain from that row on
-- (`juncture audit verify` walks it). The triggers below refuse UPDATE and
-- DELETE outright.
CREATE TABLE audit_event (
    seq         INTEGER PRIMARY KEY,
    at          TEXT    NOT NULL,
    actor       TEXT    NOT NULL,
    action      TEXT    NOT NULL,
    entity      TEXT    NOT NULL,
    entity_id   TEXT    NOT NULL,
    before_json TEXT,
    after_json  TEXT,
    prev_hash   TEXT    NOT NULL,
    hash        TEXT    NOT NULL UNIQUE
);

CREATE INDEX audit_event_entity ON audit_event (entity, entity_id);

CREATE TRIGGER audit_event_refuse_update BEFORE UPDATE ON audit_event
BEGIN
    SELECT RAISE(ABORT, 'audit events are append-only: UPDATE refused');
END;

CREATE TRIGGER audit_event_refuse_delete BEFORE DELETE ON audit_event
BEGIN
    SELECT RAISE(ABORT, 'audit events are append-only: DELETE refused');
END;
