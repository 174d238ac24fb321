-- 0002: saved designs and the builds drawn from them.
--
-- A design is kept as the JSON document package production writes
-- (production.EncodeDesign), with the figures a list shows as columns.
-- "designs remove" stamps removed_at: builds keep pointing at the design
-- and its id is never given out again. design_stock lists the stock rows a
-- board of the design uses, so that rows can be traced to designs.
--
-- A build records its ledger entries in build_movement: the draws
-- (undo = 0) and, once undone, the returns (undo = 1).

CREATE TABLE design (
    id           TEXT    PRIMARY KEY CHECK (length(id) BETWEEN 4 AND 16 AND id = lower(id)),
    name         TEXT    NOT NULL DEFAULT '',
    summary      TEXT    NOT NULL,
    filters      INTEGER NOT NULL CHECK (filters >= 1),
    boards       INTEGER NOT NULL CHECK (boards >= 1),      -- the batch size it was fitted for
    worst_error  REAL    NOT NULL CHECK (worst_error >= 0), -- dB
    part_count   INTEGER NOT NULL CHECK (part_count >= 1),
    unique_parts INTEGER NOT NULL CHECK (unique_parts >= 1),
    meets_spec   INTEGER NOT NULL CHECK (meets_spec IN (0, 1)),
    document     TEXT    NOT NULL,
    created_at   TEXT    NOT NULL,                          -- RFC 3339, UTC
    removed_at   TEXT                                       -- NULL while listed
);

CREATE TABLE design_stock (
    design_id TEXT    NOT NULL REFERENCES design (id),
    stock_id  INTEGER NOT NULL REFERENCES stock (id),
    per_board INTEGER NOT NULL CHECK (per_board >= 1),
    PRIMARY KEY (design_id, stock_id)
);

CREATE INDEX design_stock_row ON design_stock (stock_id);

CREATE TABLE build (
    id        INTEGER PRIMARY KEY AUTOINCREMENT,
    design_id TEXT    NOT NULL REFERENCES design (id),
    boards    INTEGER NOT NULL CHECK (boards >= 1),
    built_at  TEXT    NOT NULL,                             -- RFC 3339, UTC
    undone_at TEXT                                          -- NULL while the build stands
);

CREATE INDEX build_design ON build (design_id);

CREATE TABLE build_movement (
    build_id    INTEGER NOT NULL REFERENCES build (id),
    movement_id INTEGER NOT NULL UNIQUE REFERENCES movement (id),
    undo        INTEGER NOT NULL CHECK (undo IN (0, 1)),
    PRIMARY KEY (build_id, movement_id)
);
