-- Temperature-switch tests: the settings of a run whose item is a switch,
-- and the ramps through the switching region as they were taken.
CREATE TABLE switch_test (
    run_id                INTEGER PRIMARY KEY REFERENCES run (id),
    nominal_t_c           REAL    NOT NULL,
    actuation_direction   TEXT    NOT NULL CHECK (actuation_direction IN ('rising', 'falling')),
    contact_action        TEXT    NOT NULL CHECK (contact_action IN ('opens', 'closes')),
    ramp_rate_c_per_min   REAL    CHECK (ramp_rate_c_per_min IS NULL OR ramp_rate_c_per_min > 0),
    time_constant_s       REAL    CHECK (time_constant_s IS NULL OR time_constant_s >= 0),
    lag_half_width_c      REAL    CHECK (lag_half_width_c IS NULL OR lag_half_width_c >= 0),
    observed_resolution_c REAL    NOT NULL DEFAULT 0 CHECK (observed_resolution_c >= 0),
    CHECK ((ramp_rate_c_per_min IS NULL) = (time_constant_s IS NULL)),
    CHECK (ramp_rate_c_per_min IS NOT NULL OR lag_half_width_c IS NOT NULL)
);

CREATE TABLE switch_ramp (
    id           INTEGER PRIMARY KEY,
    run_id       INTEGER NOT NULL REFERENCES run (id),
    position     INTEGER NOT NULL,
    direction    TEXT    NOT NULL CHECK (direction IN ('rising', 'falling')),
    -- Readings as taken: JSON [[t_ref_c, "open" | "closed"], ...].
    readings     TEXT,
    -- Or the reference temperature observed at the state change, °C.
    observed_t_c REAL,
    created_at   TEXT    NOT NULL,
    UNIQUE (run_id, position),
    CHECK ((readings IS NULL) <> (observed_t_c IS NULL))
);

-- Characterisation runs of comparison media (baths, furnaces, dry blocks):
-- the raw readings as recorded, and the half-widths derived from them at
-- each characterised temperature (EURAMET cg-13 approach).
CREATE TABLE medium_characterisation_run (
    id               INTEGER PRIMARY KEY,
    equipment_id     INTEGER NOT NULL REFERENCES equipment (id),
    characterised_on TEXT    NOT NULL,
    input            TEXT    NOT NULL,
    recorded_by      INTEGER NOT NULL REFERENCES app_user (id),
    created_at       TEXT    NOT NULL
);

CREATE INDEX medium_characterisation_run_equipment
    ON medium_characterisation_run (equipment_id, characterised_on);

CREATE TABLE medium_point (
    run_id                  INTEGER NOT NULL REFERENCES medium_characterisation_run (id),
    temperature_c           REAL    NOT NULL,
    uniformity_half_width_c REAL    NOT NULL CHECK (uniformity_half_width_c >= 0),
    stability_half_width_c  REAL    NOT NULL CHECK (stability_half_width_c >= 0),
    loading_half_width_c    REAL    CHECK (loading_half_width_c IS NULL OR loading_half_width_c >= 0),
    derivation              TEXT    NOT NULL,
    PRIMARY KEY (run_id, temperature_c)
);
