-- Lab-entered uncertainty-budget rows per kind of unit under test
-- (immersion, self-heating, inhomogeneity, reference junction, display
-- resolution...). A new run copies its kind's rows unless the technician
-- gives rows of their own; the values the records hold (reference
-- certificate, readouts, medium characterisation) are added by the
-- calculation itself.
CREATE TABLE budget_template_row (
    id              INTEGER PRIMARY KEY,
    instrument_kind TEXT    NOT NULL
                    CHECK (instrument_kind IN ('thermocouple', 'prt', 'sprt', 'indicating', 'switch')),
    position        INTEGER NOT NULL,
    name            TEXT    NOT NULL CHECK (length(trim(name)) > 0),
    distribution    TEXT    NOT NULL
                    CHECK (distribution IN ('rectangular', 'triangular', 'u_shaped', 'normal')),
    value_c         REAL    NOT NULL CHECK (value_c >= 0),
    kind            TEXT    NOT NULL DEFAULT 'custom'
                    CHECK (kind IN ('custom', 'reference_junction', 'reference_drift', 'uut_resolution')),
    UNIQUE (instrument_kind, position)
);
