-- 0003: the shop's attributes of a stock row.
--
-- They are not part of the row's identity (the unique index of 0001 is
-- unchanged). voltage is the rated voltage in volts, 0 = not rated.
-- price_micros is the unit price in millionths of the shop's one currency
-- (an exact integer, never a float; no currency conversion is done),
-- NULL = not known. min_stock is the quantity below which the row should
-- be reordered, 0 = no minimum; pack is the pack size it is bought in,
-- 0 = single parts. supplier_ref is free text to reorder by.
--
-- A change of these attributes is written to the ledger as a note: a
-- movement with delta 0 whose reason says what changed.

ALTER TABLE stock ADD COLUMN voltage      REAL    NOT NULL DEFAULT 0 CHECK (voltage >= 0);
ALTER TABLE stock ADD COLUMN price_micros INTEGER CHECK (price_micros IS NULL OR price_micros >= 0);
ALTER TABLE stock ADD COLUMN min_stock    INTEGER NOT NULL DEFAULT 0 CHECK (min_stock >= 0);
ALTER TABLE stock ADD COLUMN pack         INTEGER NOT NULL DEFAULT 0 CHECK (pack >= 0);
ALTER TABLE stock ADD COLUMN supplier_ref TEXT    NOT NULL DEFAULT '';
