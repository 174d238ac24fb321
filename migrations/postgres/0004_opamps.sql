-- 0004 (PostgreSQL): amplifier rows in the stock, as sqlite/0004_opamps.sql
-- describes them. PostgreSQL changes the constraints in place; SQLite had
-- to rebuild the table.

ALTER TABLE stock DROP CONSTRAINT stock_kind;
ALTER TABLE stock ADD CONSTRAINT stock_kind CHECK (kind IN ('resistor', 'capacitor', 'opamp'));
ALTER TABLE stock DROP CONSTRAINT stock_value;
ALTER TABLE stock ADD CONSTRAINT stock_value
    CHECK ((kind = 'opamp' AND value = 0) OR (kind <> 'opamp' AND value > 0));

ALTER TABLE stock ADD COLUMN label    TEXT    NOT NULL DEFAULT '' CHECK ((kind = 'opamp') = (label <> ''));
ALTER TABLE stock ADD COLUMN channels INTEGER NOT NULL DEFAULT 0
    CHECK ((kind = 'opamp' AND channels IN (1, 2, 4)) OR (kind <> 'opamp' AND channels = 0));
ALTER TABLE stock ADD COLUMN gbw      DOUBLE PRECISION NOT NULL DEFAULT 0 CHECK (gbw >= 0);
ALTER TABLE stock ADD COLUMN dc_gain  DOUBLE PRECISION NOT NULL DEFAULT 0 CHECK (dc_gain >= 0);
ALTER TABLE stock ADD COLUMN slew     DOUBLE PRECISION NOT NULL DEFAULT 0 CHECK (slew >= 0);
ALTER TABLE stock ADD COLUMN supply   TEXT    NOT NULL DEFAULT '';

DROP INDEX stock_identity;
CREATE UNIQUE INDEX stock_identity ON stock (
    kind,
    value,
    (translate(label,      'ABCDEFGHIJKLMNOPQRSTUVWXYZ', 'abcdefghijklmnopqrstuvwxyz')),
    tolerance,
    (translate(package,    'ABCDEFGHIJKLMNOPQRSTUVWXYZ', 'abcdefghijklmnopqrstuvwxyz')),
    (translate(dielectric, 'ABCDEFGHIJKLMNOPQRSTUVWXYZ', 'abcdefghijklmnopqrstuvwxyz')),
    (translate(location,   'ABCDEFGHIJKLMNOPQRSTUVWXYZ', 'abcdefghijklmnopqrstuvwxyz'))
) WHERE removed_at IS NULL;
