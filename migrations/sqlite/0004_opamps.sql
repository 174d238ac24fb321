-- 0004: amplifier rows in the stock.
--
-- A third kind, 'opamp': a package of 1, 2 or 4 operational amplifiers,
-- identified by the user's own label instead of a value (value is 0), with
-- its gain-bandwidth (Hz), open-loop DC gain (dB), slew rate (V/us) and
-- supply range. 0 and '' mean "not stated". Its quantity counts packages.
-- Resistor and capacitor rows keep label '' and the amplifier columns at
-- their defaults.
--
-- SQLite cannot change a CHECK constraint in place, so the table is
-- rebuilt as the SQLite manual's "Making Other Kinds Of Table Schema
-- Changes" describes: new table, copy, drop, rename. The runner applies
-- every step with foreign-key enforcement off (as that procedure requires)
-- and runs PRAGMA foreign_key_check before it commits, so movement and
-- design_stock still find every row they name.

CREATE TABLE stock_new (
    id          INTEGER PRIMARY KEY AUTOINCREMENT,
    kind        TEXT    NOT NULL CHECK (kind IN ('resistor', 'capacitor', 'opamp')),
    value       REAL    NOT NULL CHECK ((kind = 'opamp' AND value = 0) OR (kind <> 'opamp' AND value > 0)),
    tolerance   REAL    NOT NULL DEFAULT 0
                        CHECK (tolerance >= 0 AND tolerance <= 0.5), -- fraction, 0 = not stated
    quantity    INTEGER NOT NULL CHECK (quantity >= 0),            -- parts; packages for opamp
    package     TEXT    NOT NULL DEFAULT '',
    dielectric  TEXT    NOT NULL DEFAULT '',
    location    TEXT    NOT NULL DEFAULT '',
    note        TEXT    NOT NULL DEFAULT '',
    created_at  TEXT    NOT NULL,                                  -- RFC 3339, UTC
    updated_at  TEXT    NOT NULL,
    removed_at  TEXT,                                              -- NULL while in the inventory
    -- 0003's shop attributes, as that migration defined them
    voltage      REAL    NOT NULL DEFAULT 0 CHECK (voltage >= 0),
    price_micros INTEGER CHECK (price_micros IS NULL OR price_micros >= 0),
    min_stock    INTEGER NOT NULL DEFAULT 0 CHECK (min_stock >= 0),
    pack         INTEGER NOT NULL DEFAULT 0 CHECK (pack >= 0),
    supplier_ref TEXT    NOT NULL DEFAULT '',
    -- amplifiers
    label       TEXT    NOT NULL DEFAULT ''
                        CHECK ((kind = 'opamp') = (label <> '')),
    channels    INTEGER NOT NULL DEFAULT 0
                        CHECK ((kind = 'opamp' AND channels IN (1, 2, 4)) OR (kind <> 'opamp' AND channels = 0)),
    gbw         REAL    NOT NULL DEFAULT 0 CHECK (gbw >= 0),       -- Hz, 0 = not stated
    dc_gain     REAL    NOT NULL DEFAULT 0 CHECK (dc_gain >= 0),   -- dB, 0 = not stated
    slew        REAL    NOT NULL DEFAULT 0 CHECK (slew >= 0),      -- V/us, 0 = not stated
    supply      TEXT    NOT NULL DEFAULT ''
);

INSERT INTO stock_new (id, kind, value, tolerance, quantity, package, dielectric, location, note,
                       created_at, updated_at, removed_at,
                       voltage, price_micros, min_stock, pack, supplier_ref)
    SELECT id, kind, value, tolerance, quantity, package, dielectric, location, note,
           created_at, updated_at, removed_at,
           voltage, price_micros, min_stock, pack, supplier_ref
    FROM stock;

DROP TABLE stock;
ALTER TABLE stock_new RENAME TO stock;

CREATE UNIQUE INDEX stock_identity ON stock (
    kind,
    value,
    label      COLLATE NOCASE,
    tolerance,
    package    COLLATE NOCASE,
    dielectric COLLATE NOCASE,
    location   COLLATE NOCASE
) WHERE removed_at IS NULL;
