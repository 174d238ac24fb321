-- 0001: the stock inventory and its movement ledger.
--
-- A stock row is never deleted: "stock remove" stamps removed_at, so that
-- ledger entries (and later tables) can keep pointing at it. The identity
-- of a row in the inventory (kind, value, tolerance, package, dielectric,
-- location) is unique among rows not removed; text compares without regard
-- to ASCII letter case.

CREATE TABLE stock (
    id          INTEGER PRIMARY KEY AUTOINCREMENT,
    kind        TEXT    NOT NULL CHECK (kind IN ('resistor', 'capacitor')),
    value       REAL    NOT NULL CHECK (value > 0),        -- ohms or farads
    tolerance   REAL    NOT NULL DEFAULT 0
                        CHECK (tolerance >= 0 AND tolerance <= 0.5), -- fraction, 0 = not stated
    quantity    INTEGER NOT NULL CHECK (quantity >= 0),
    package     TEXT    NOT NULL DEFAULT '',
    dielectric  TEXT    NOT NULL DEFAULT '',
    location    TEXT    NOT NULL DEFAULT '',
    note        TEXT    NOT NULL DEFAULT '',
    created_at  TEXT    NOT NULL,                          -- RFC 3339, UTC
    updated_at  TEXT    NOT NULL,
    removed_at  TEXT                                       -- NULL while in the inventory
);

CREATE UNIQUE INDEX stock_identity ON stock (
    kind,
    value,
    tolerance,
    package    COLLATE NOCASE,
    dielectric COLLATE NOCASE,
    location   COLLATE NOCASE
) WHERE removed_at IS NULL;

CREATE TABLE movement (
    id        INTEGER PRIMARY KEY AUTOINCREMENT,
    stock_id  INTEGER NOT NULL REFERENCES stock (id),
    delta     INTEGER NOT NULL,
    balance   INTEGER NOT NULL CHECK (balance >= 0),       -- quantity after the change
    reason    TEXT    NOT NULL CHECK (reason <> ''),
    at        TEXT    NOT NULL                             -- RFC 3339, UTC
);

CREATE INDEX movement_stock ON movement (stock_id, id);
