-- Failed sign-ins, for throttling: after too many failures for one user name
-- within a window, further attempts are refused until the window passes.
-- Rows older than the window are removed as new failures arrive.
CREATE TABLE sign_in_failure (
    id        INTEGER PRIMARY KEY,
    username  TEXT    NOT NULL,
    failed_at TEXT    NOT NULL
);

CREATE INDEX sign_in_failure_user ON sign_in_failure (username, failed_at);
