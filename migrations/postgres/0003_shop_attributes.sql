-- 0003 (PostgreSQL): the shop's attributes of a stock row, as
-- sqlite/0003_shop_attributes.sql describes them.

ALTER TABLE stock ADD COLUMN voltage      DOUBLE PRECISION NOT NULL DEFAULT 0 CHECK (voltage >= 0);
ALTER TABLE stock ADD COLUMN price_micros BIGINT  CHECK (price_micros IS NULL OR price_micros >= 0);
ALTER TABLE stock ADD COLUMN min_stock    INTEGER NOT NULL DEFAULT 0 CHECK (min_stock >= 0);
ALTER TABLE stock ADD COLUMN pack         INTEGER NOT NULL DEFAULT 0 CHECK (pack >= 0);
ALTER TABLE stock ADD COLUMN supplier_ref TEXT    NOT NULL DEFAULT '';
