-- Facts of each issued certificate that the register filters on, written in
-- the same transaction as the certificate and, like it, never changed.
-- outcome: the least favourable conformity outcome over the set points
-- (ILAC-G8:09/2019 4.2.3), or 'no_statement' when none was agreed.
CREATE TABLE certificate_facts (
    certificate_id INTEGER PRIMARY KEY REFERENCES certificate (id),
    outcome        TEXT    NOT NULL
                   CHECK (outcome IN ('pass', 'conditional_pass', 'conditional_fail', 'fail', 'no_statement'))
);

INSERT INTO certificate_facts (certificate_id, outcome)
SELECT c.id,
       CASE
           WHEN EXISTS (SELECT 1 FROM json_each(c.snapshot, '$.results') j
                        WHERE json_extract(j.value, '$.outcome') = 'fail') THEN 'fail'
           WHEN EXISTS (SELECT 1 FROM json_each(c.snapshot, '$.results') j
                        WHERE json_extract(j.value, '$.outcome') = 'conditional fail') THEN 'conditional_fail'
           WHEN EXISTS (SELECT 1 FROM json_each(c.snapshot, '$.results') j
                        WHERE json_extract(j.value, '$.outcome') = 'conditional pass') THEN 'conditional_pass'
           WHEN EXISTS (SELECT 1 FROM json_each(c.snapshot, '$.results') j
                        WHERE json_extract(j.value, '$.outcome') = 'pass') THEN 'pass'
           ELSE 'no_statement'
       END
FROM certificate c;

CREATE INDEX certificate_facts_outcome ON certificate_facts (outcome, certificate_id);

CREATE TRIGGER certificate_facts_refuse_update BEFORE UPDATE ON certificate_facts
BEGIN
    SELECT RAISE(ABORT, 'facts of issued certificates are never edited');
END;

CREATE TRIGGER certificate_facts_refuse_delete BEFORE DELETE ON certificate_facts
BEGIN
    SELECT RAISE(ABORT, 'facts of issued certificates are never deleted');
END;

-- Register filters and the impact query: certificates of a run, runs by
-- every equipment role, instruments by kind.
CREATE INDEX certificate_run ON certificate (run_id);
CREATE INDEX certificate_issued ON certificate (issued_on, id);
CREATE INDEX run_reference_readout ON run (reference_readout_id, performed_on);
CREATE INDEX run_uut_readout ON run (uut_readout_id, performed_on);
CREATE INDEX run_medium ON run (medium_id, performed_on);
CREATE INDEX instrument_kind ON instrument (kind, id);
