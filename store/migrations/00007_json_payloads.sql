-- +goose Up
-- Builds' spec and snapshot and the feed's payloads are written once and
-- read back whole, never queried inside: keep them as json (checked, stored
-- as sent) rather than jsonb (parsed into a binary tree on every insert).
ALTER TABLE builds ALTER COLUMN spec TYPE json USING spec::json,
                   ALTER COLUMN snapshot TYPE json USING snapshot::json;
ALTER TABLE changes ALTER COLUMN data TYPE json USING data::json;

-- +goose Down
ALTER TABLE changes ALTER COLUMN data TYPE jsonb USING data::jsonb;
ALTER TABLE builds ALTER COLUMN spec TYPE jsonb USING spec::jsonb,
                   ALTER COLUMN snapshot TYPE jsonb USING snapshot::jsonb;
