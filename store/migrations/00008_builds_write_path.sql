-- +goose Up
-- A build's organisation is already held to by its (org_id, location_id)
-- reference to locations, whose org_id references organisations; the
-- second check locked the organisation's row once more on every insert.
ALTER TABLE builds DROP CONSTRAINT builds_org_id_fkey;
-- A build row (spec and snapshot, a few kilobytes) fits a page: keep it
-- there uncompressed rather than compressing it on every insert (the
-- toaster starts at about 2 kB by default).
ALTER TABLE builds SET (toast_tuple_target = 8160);

-- +goose Down
ALTER TABLE builds RESET (toast_tuple_target);
ALTER TABLE builds ADD CONSTRAINT builds_org_id_fkey FOREIGN KEY (org_id) REFERENCES organisations (id);
