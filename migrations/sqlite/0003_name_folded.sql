-- Fluxbound schema, version 3: the search key of a site's name, NFC
-- normalised and fully case folded (Unicode), so that a name search gives
-- the same answer on SQLite and PostgreSQL. The key is computed in Rust
-- (`store::fold`), never in SQL; rows written before this version are
-- filled in at startup, right after the migrations (`Store::open`).
ALTER TABLE sites ADD COLUMN name_folded TEXT;
