-- The laboratory's own identity and settings: one row, always id = 1.
--
-- Everything a certificate prints about the issuing laboratory (ISO/IEC
-- 17025:2017 7.8.2.1 b) and the defaults the lab applies to every job live
-- here, so that they can be changed without a new release.
CREATE TABLE lab_settings (
    id                          INTEGER PRIMARY KEY CHECK (id = 1),
    name                        TEXT    NOT NULL CHECK (length(trim(name)) > 0),
    address                     TEXT    NOT NULL,
    -- Accreditation body and number as printed on certificates; empty when
    -- the lab is not accredited.
    accreditation               TEXT    NOT NULL DEFAULT '',
    contact_email               TEXT    NOT NULL DEFAULT '',
    contact_phone               TEXT    NOT NULL DEFAULT '',
    -- Pattern for certificate numbers: {year} and {seq:N} (zero-padded
    -- sequence of N digits) are replaced at issue.
    certificate_number_pattern  TEXT    NOT NULL DEFAULT 'C{year}-{seq:5}',
    -- Default coverage probability for expanded uncertainties (0 < p < 1);
    -- 0.9545 is the probability of k = 2 under the normal distribution.
    coverage_probability        REAL    NOT NULL DEFAULT 0.9545
                                        CHECK (coverage_probability > 0 AND coverage_probability < 1),
    -- Days before a due date at which equipment is listed as "due soon".
    due_warning_days            INTEGER NOT NULL DEFAULT 30 CHECK (due_warning_days >= 0),
    -- Maximum age of a comparison medium's characterisation, in days.
    characterisation_interval_days INTEGER NOT NULL DEFAULT 365
                                        CHECK (characterisation_interval_days > 0),
    -- ISO 8601 UTC timestamp of the last change.
    updated_at                  TEXT    NOT NULL
);
