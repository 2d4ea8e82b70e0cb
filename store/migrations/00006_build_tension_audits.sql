-- +goose Up
-- Tension audits of built wheels, kept for warranty: never edited; a later
-- audit of the same build supersedes the earlier one.
CREATE TABLE build_tension_audits (
    org_id         uuid NOT NULL REFERENCES organisations (id),
    id             uuid NOT NULL PRIMARY KEY,
    build_id       uuid NOT NULL,
    tool_id        uuid NOT NULL,
    calibration_id uuid NOT NULL,
    readings       jsonb NOT NULL,
    result         jsonb NOT NULL,
    notes          text NOT NULL DEFAULT '',
    superseded_by  uuid,
    created_at     timestamptz NOT NULL DEFAULT now(),
    UNIQUE (org_id, id),
    FOREIGN KEY (org_id, build_id) REFERENCES builds (org_id, id),
    FOREIGN KEY (org_id, calibration_id) REFERENCES calibrations (org_id, id)
);
CREATE INDEX build_tension_audits_by_build ON build_tension_audits (org_id, build_id, id);

-- Only superseded_by may ever be set, once.
-- +goose StatementBegin
CREATE FUNCTION build_tension_audits_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        RAISE EXCEPTION 'tension audits are kept for warranty and never deleted';
    END IF;
    IF OLD.superseded_by IS NOT NULL OR NEW.superseded_by IS NULL
       OR (NEW.id, NEW.build_id, NEW.tool_id, NEW.calibration_id, NEW.readings, NEW.result, NEW.notes, NEW.created_at)
          IS DISTINCT FROM
          (OLD.id, OLD.build_id, OLD.tool_id, OLD.calibration_id, OLD.readings, OLD.result, OLD.notes, OLD.created_at) THEN
        RAISE EXCEPTION 'tension audits are never edited, only superseded';
    END IF;
    RETURN NEW;
END $$;
-- +goose StatementEnd
CREATE TRIGGER build_tension_audits_immutable BEFORE UPDATE OR DELETE ON build_tension_audits
    FOR EACH ROW EXECUTE FUNCTION build_tension_audits_immutable();

-- +goose Down
DROP TABLE build_tension_audits;
DROP FUNCTION build_tension_audits_immutable();
