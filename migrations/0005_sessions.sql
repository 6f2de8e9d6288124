-- Browser sessions. The cookie holds a random secret; only its SHA-256 is
-- kept here, with the CSRF token every form of the session must echo.
CREATE TABLE web_session (
    id_hash     TEXT    PRIMARY KEY,
    user_id     INTEGER NOT NULL REFERENCES app_user (id),
    csrf_token  TEXT    NOT NULL,
    created_at  TEXT    NOT NULL,
    -- Sessions end at this time (UTC), or at sign-out.
    expires_at  TEXT    NOT NULL
);

CREATE INDEX web_session_user ON web_session (user_id);

-- Why a reviewer returned a run to its technician (shown on the
-- technician's page until the run is submitted again).
ALTER TABLE run ADD COLUMN returned_reason TEXT;
