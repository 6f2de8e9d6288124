-- The laboratory's records: customers and their instruments, the lab's own
-- reference standards and other equipment with their certificates, and
-- comparison runs with set points and raw readings.
--
-- Dates are ISO 8601 text (YYYY-MM-DD), timestamps ISO 8601 UTC. Numbers
-- carry their unit in the column name.

CREATE TABLE customer (
    id            INTEGER PRIMARY KEY,
    name          TEXT NOT NULL UNIQUE CHECK (length(trim(name)) > 0),
    address       TEXT NOT NULL DEFAULT '',
    contact_email TEXT NOT NULL DEFAULT '',
    contact_phone TEXT NOT NULL DEFAULT '',
    created_at    TEXT NOT NULL,
    updated_at    TEXT NOT NULL
);

-- A customer's unit under test, identified by its serial number.
CREATE TABLE instrument (
    id           INTEGER PRIMARY KEY,
    serial       TEXT    NOT NULL UNIQUE CHECK (length(trim(serial)) > 0),
    kind         TEXT    NOT NULL
                 CHECK (kind IN ('thermocouple', 'prt', 'sprt', 'indicating', 'switch')),
    -- Letter type of a thermocouple (B, E, J, K, N, R, S, T).
    tc_type      TEXT    CHECK (tc_type IS NULL OR tc_type IN ('B','E','J','K','N','R','S','T')),
    -- Nominal R0 of a PRT.
    r0_ohm       REAL    CHECK (r0_ohm IS NULL OR r0_ohm > 0),
    description  TEXT    NOT NULL DEFAULT '',
    manufacturer TEXT    NOT NULL DEFAULT '',
    model        TEXT    NOT NULL DEFAULT '',
    customer_id  INTEGER NOT NULL REFERENCES customer (id),
    created_at   TEXT    NOT NULL,
    updated_at   TEXT    NOT NULL,
    CHECK (kind <> 'thermocouple' OR tc_type IS NOT NULL),
    CHECK (kind <> 'prt' OR r0_ohm IS NOT NULL)
);

-- The lab's own reference standards, readouts and comparison media.
CREATE TABLE equipment (
    id            INTEGER PRIMARY KEY,
    -- The lab's own identifier (asset number), printed on certificates.
    asset_id      TEXT NOT NULL UNIQUE CHECK (length(trim(asset_id)) > 0),
    kind          TEXT NOT NULL CHECK (kind IN (
                      'reference_sprt', 'reference_prt', 'reference_thermocouple',
                      'reference_indicating', 'readout', 'bath', 'furnace', 'dry_block')),
    description   TEXT NOT NULL DEFAULT '',
    manufacturer  TEXT NOT NULL DEFAULT '',
    model         TEXT NOT NULL DEFAULT '',
    serial        TEXT NOT NULL DEFAULT '',
    firmware      TEXT NOT NULL DEFAULT '',
    location      TEXT NOT NULL DEFAULT '',
    status        TEXT NOT NULL DEFAULT 'in_service'
                  CHECK (status IN ('in_service', 'out_of_service')),
    status_reason TEXT NOT NULL DEFAULT '',
    -- Letter type of a reference thermocouple.
    tc_type       TEXT CHECK (tc_type IS NULL OR tc_type IN ('B','E','J','K','N','R','S','T')),
    -- Readout specification: accuracy = ±(offset + relative × |reading|)
    -- in spec_unit, and the resolution (one digit) in spec_unit.
    spec_unit              TEXT CHECK (spec_unit IS NULL OR spec_unit IN ('mV', 'ohm', 'degC')),
    spec_offset            REAL CHECK (spec_offset IS NULL OR spec_offset >= 0),
    spec_relative          REAL CHECK (spec_relative IS NULL OR spec_relative >= 0),
    spec_resolution        REAL CHECK (spec_resolution IS NULL OR spec_resolution >= 0),
    created_at    TEXT NOT NULL,
    updated_at    TEXT NOT NULL,
    CHECK (kind <> 'reference_thermocouple' OR tc_type IS NOT NULL)
);

-- Calibration certificates of the lab's equipment. A run uses the
-- certificate with the latest calibration date on or before the run date;
-- that certificate's due date decides whether the item may be used.
CREATE TABLE equipment_certificate (
    id            INTEGER PRIMARY KEY,
    equipment_id  INTEGER NOT NULL REFERENCES equipment (id),
    number        TEXT    NOT NULL CHECK (length(trim(number)) > 0),
    issuer        TEXT    NOT NULL CHECK (length(trim(issuer)) > 0),
    calibrated_on TEXT    NOT NULL,
    due_on        TEXT    NOT NULL,
    -- Coefficients in a tagged JSON form, e.g. {"form":"cvd","r0_ohm":..},
    -- {"form":"its90","r_tpw_ohm":..,"sub_range":..,"a":..},
    -- {"form":"emf_deviation","coefficients_mv":[..]},
    -- {"form":"correction","coefficients_c":[..]} or {"form":"none"}.
    coefficients  TEXT    NOT NULL DEFAULT '{"form":"none"}',
    created_at    TEXT    NOT NULL,
    UNIQUE (equipment_id, number),
    CHECK (due_on > calibrated_on)
);

-- The expanded uncertainty a certificate states, by temperature range.
CREATE TABLE certificate_uncertainty (
    id              INTEGER PRIMARY KEY,
    certificate_id  INTEGER NOT NULL REFERENCES equipment_certificate (id),
    t_lo_c          REAL    NOT NULL,
    t_hi_c          REAL    NOT NULL,
    expanded_c      REAL    NOT NULL CHECK (expanded_c > 0),
    k               REAL    NOT NULL DEFAULT 2 CHECK (k > 0),
    CHECK (t_hi_c >= t_lo_c)
);

-- Uniformity and stability of a comparison medium (bath, furnace, dry
-- block) by temperature range, as characterised on a date.
CREATE TABLE medium_characterisation (
    id                       INTEGER PRIMARY KEY,
    equipment_id             INTEGER NOT NULL REFERENCES equipment (id),
    characterised_on         TEXT    NOT NULL,
    t_lo_c                   REAL    NOT NULL,
    t_hi_c                   REAL    NOT NULL,
    uniformity_half_width_c  REAL    NOT NULL CHECK (uniformity_half_width_c >= 0),
    stability_half_width_c   REAL    NOT NULL CHECK (stability_half_width_c >= 0),
    CHECK (t_hi_c >= t_lo_c)
);

-- The lab's calibration and measurement capability by kind of unit under
-- test and temperature range (ILAC-P14: no smaller U is ever reported).
CREATE TABLE cmc (
    id           INTEGER PRIMARY KEY,
    instrument_kind TEXT NOT NULL
                 CHECK (instrument_kind IN ('thermocouple', 'prt', 'sprt', 'indicating', 'switch')),
    t_lo_c       REAL NOT NULL,
    t_hi_c       REAL NOT NULL,
    expanded_c   REAL NOT NULL CHECK (expanded_c > 0),
    CHECK (t_hi_c >= t_lo_c)
);

-- A comparison run: one unit under test against one reference standard in
-- one medium, on one date, by one technician.
CREATE TABLE run (
    id                   INTEGER PRIMARY KEY,
    instrument_id        INTEGER NOT NULL REFERENCES instrument (id),
    reference_id         INTEGER NOT NULL REFERENCES equipment (id),
    reference_readout_id INTEGER REFERENCES equipment (id),
    uut_readout_id       INTEGER REFERENCES equipment (id),
    medium_id            INTEGER REFERENCES equipment (id),
    performed_on         TEXT    NOT NULL,
    procedure_ref        TEXT    NOT NULL CHECK (length(trim(procedure_ref)) > 0),
    location             TEXT    NOT NULL DEFAULT '',
    ambient_t_c          REAL,
    ambient_rh_percent   REAL CHECK (ambient_rh_percent IS NULL OR ambient_rh_percent BETWEEN 0 AND 100),
    -- How the UUT thermocouple's reference junction was held.
    rj_method            TEXT    NOT NULL DEFAULT 'not_applicable'
                         CHECK (rj_method IN ('ice_point', 'measured', 'compensated', 'not_applicable')),
    immersion_mm         REAL CHECK (immersion_mm IS NULL OR immersion_mm > 0),
    condition            TEXT    NOT NULL DEFAULT 'as_found' CHECK (condition IN ('as_found', 'as_left')),
    -- Decision rule and tolerance agreed with the customer for this job.
    decision_rule        TEXT    NOT NULL DEFAULT 'simple'
                         CHECK (decision_rule IN ('simple', 'guarded', 'guarded_non_binary', 'none')),
    guard_band_factor    REAL    NOT NULL DEFAULT 1 CHECK (guard_band_factor >= 0),
    tolerance_class      TEXT,
    tolerance_limit_c    REAL CHECK (tolerance_limit_c IS NULL OR tolerance_limit_c > 0),
    fit_degree           INTEGER CHECK (fit_degree IS NULL OR fit_degree BETWEEN 0 AND 5),
    -- Lab-entered budget rows (immersion, self-heating, inhomogeneity,
    -- drift...) as JSON: [{"name":..,"distribution":..,"half_width_c":..}].
    extra_budget         TEXT    NOT NULL DEFAULT '[]',
    technician_id        INTEGER NOT NULL REFERENCES app_user (id),
    status               TEXT    NOT NULL DEFAULT 'open'
                         CHECK (status IN ('open', 'submitted', 'returned', 'approved')),
    -- Incremented on every change; a write naming an older version is refused.
    version              INTEGER NOT NULL DEFAULT 1,
    created_at           TEXT    NOT NULL,
    updated_at           TEXT    NOT NULL,
    submitted_at         TEXT
);

CREATE INDEX run_reference ON run (reference_id, performed_on);
CREATE INDEX run_instrument ON run (instrument_id);

CREATE TABLE set_point (
    id          INTEGER PRIMARY KEY,
    run_id      INTEGER NOT NULL REFERENCES run (id),
    nominal_t_c REAL    NOT NULL,
    created_at  TEXT    NOT NULL,
    UNIQUE (run_id, nominal_t_c)
);

-- Raw readings as taken, never only averages (ISO/IEC 17025:2017 7.5.1).
-- Signals are in the unit of the instrument: mV for thermocouples, ohm for
-- resistance thermometers, degC for indicating thermometers.
CREATE TABLE reading (
    id               INTEGER PRIMARY KEY,
    set_point_id     INTEGER NOT NULL REFERENCES set_point (id),
    position         INTEGER NOT NULL,
    taken_at         TEXT,
    reference_signal REAL    NOT NULL,
    uut_signal       REAL    NOT NULL,
    rj_t_c           REAL,
    UNIQUE (set_point_id, position)
);
