-- Readings from a data logger's file, stored in blocks of up to 65 536.
--
-- They are the same raw values as rows of `reading` (ISO/IEC 17025:2017
-- 7.5.1 asks for the raw observations, not for a form): each block holds the
-- readings at positions first_position .. first_position + count - 1 of its
-- set point, which never overlap positions held as rows. A million readings
-- are then a few rows to write and read instead of a million.
--
-- signals:  count × 3 little-endian IEEE 754 doubles, per reading the
--           reference signal, the UUT signal and the reference-junction
--           temperature in °C (NaN when not given; given values are finite);
-- taken_at: the time stamps as written, one per reading joined by a line
--           feed (an empty line: none), or NULL when no reading has one.
CREATE TABLE reading_block (
    id             INTEGER PRIMARY KEY,
    set_point_id   INTEGER NOT NULL REFERENCES set_point (id),
    first_position INTEGER NOT NULL CHECK (first_position >= 1),
    count          INTEGER NOT NULL CHECK (count BETWEEN 1 AND 65536),
    signals        BLOB    NOT NULL CHECK (length(signals) = 24 * count),
    taken_at       TEXT,
    UNIQUE (set_point_id, first_position)
);
