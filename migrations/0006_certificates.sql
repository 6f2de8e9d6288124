-- Issued calibration certificates: frozen snapshots (canonical JSON of
-- everything printed) with their SHA-256. Rows are never changed or
-- removed (triggers below); an amendment is a new row with the next
-- revision that names the row it replaces and why, and the replacement is
-- recorded in certificate_replacement so the old row stays as issued.
CREATE TABLE certificate (
    id               INTEGER PRIMARY KEY,
    number           TEXT    NOT NULL,
    revision         INTEGER NOT NULL DEFAULT 0 CHECK (revision >= 0),
    run_id           INTEGER NOT NULL REFERENCES run (id),
    instrument_id    INTEGER NOT NULL REFERENCES instrument (id),
    issued_on        TEXT    NOT NULL,
    approved_by      INTEGER NOT NULL REFERENCES app_user (id),
    snapshot         TEXT    NOT NULL,
    sha256           TEXT    NOT NULL,
    replaces_id      INTEGER REFERENCES certificate (id),
    amendment_reason TEXT,
    created_at       TEXT    NOT NULL,
    UNIQUE (number, revision),
    CHECK (replaces_id IS NULL OR amendment_reason IS NOT NULL)
);

CREATE INDEX certificate_instrument ON certificate (instrument_id, issued_on);

CREATE TRIGGER certificate_refuse_update BEFORE UPDATE ON certificate
BEGIN
    SELECT RAISE(ABORT, 'issued certificates are never edited: issue an amended revision instead');
END;

CREATE TRIGGER certificate_refuse_delete BEFORE DELETE ON certificate
BEGIN
    SELECT RAISE(ABORT, 'issued certificates are never deleted');
END;

-- Which revision replaced which (kept apart so certificate rows stay as issued).
CREATE TABLE certificate_replacement (
    certificate_id  INTEGER PRIMARY KEY REFERENCES certificate (id),
    replaced_by_id  INTEGER NOT NULL REFERENCES certificate (id),
    replaced_at     TEXT    NOT NULL
);

-- Last sequence number used per year, for the lab's number pattern.
CREATE TABLE certificate_sequence (
    year  INTEGER PRIMARY KEY,
    last  INTEGER NOT NULL
);
