-- Equipment used by each issued certificate's run, in any role (reference,
-- readouts, medium), so that the register's equipment filter reads an
-- index range in certificate order instead of scanning every certificate.
-- Filled by a trigger when a certificate is inserted; never changed.
CREATE TABLE certificate_equipment (
    equipment_id   INTEGER NOT NULL REFERENCES equipment (id),
    certificate_id INTEGER NOT NULL REFERENCES certificate (id),
    PRIMARY KEY (equipment_id, certificate_id)
);

INSERT INTO certificate_equipment (equipment_id, certificate_id)
SELECT ru.reference_id, c.id FROM certificate c JOIN run ru ON ru.id = c.run_id
UNION
SELECT ru.reference_readout_id, c.id FROM certificate c JOIN run ru ON ru.id = c.run_id
WHERE ru.reference_readout_id IS NOT NULL
UNION
SELECT ru.uut_readout_id, c.id FROM certificate c JOIN run ru ON ru.id = c.run_id
WHERE ru.uut_readout_id IS NOT NULL
UNION
SELECT ru.medium_id, c.id FROM certificate c JOIN run ru ON ru.id = c.run_id
WHERE ru.medium_id IS NOT NULL;

CREATE TRIGGER certificate_equipment_fill AFTER INSERT ON certificate
BEGIN
    INSERT INTO certificate_equipment (equipment_id, certificate_id)
    SELECT e, NEW.id FROM (
        SELECT reference_id AS e FROM run WHERE id = NEW.run_id
        UNION SELECT reference_readout_id FROM run WHERE id = NEW.run_id
        UNION SELECT uut_readout_id FROM run WHERE id = NEW.run_id
        UNION SELECT medium_id FROM run WHERE id = NEW.run_id
    ) WHERE e IS NOT NULL;
END;

CREATE TRIGGER certificate_equipment_refuse_update BEFORE UPDATE ON certificate_equipment
BEGIN
    SELECT RAISE(ABORT, 'equipment of issued certificates is never edited');
END;

CREATE TRIGGER certificate_equipment_refuse_delete BEFORE DELETE ON certificate_equipment
BEGIN
    SELECT RAISE(ABORT, 'equipment of issued certificates is never deleted');
END;
