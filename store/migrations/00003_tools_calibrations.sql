-- +goose Up
-- Tensiometers and their calibrations. A tool is one physical three-point
-- tensiometer at one location of its organisation; a calibration is an
-- immutable, numbered version of one tool's table, shared by every location
-- of the organisation, stored with the tool model fitted once when it was
-- published.
CREATE TABLE tools (
    org_id           uuid NOT NULL REFERENCES organisations (id),
    id               uuid NOT NULL,
    location_id      uuid NOT NULL,
    label            text NOT NULL,
    serial           text NOT NULL DEFAULT '',
    unit_mm          double precision NOT NULL DEFAULT 0.01 CHECK (unit_mm > 0 AND unit_mm <= 1),
    measured_span_mm double precision CHECK (measured_span_mm > 0 AND measured_span_mm <= 500),
    notes            text NOT NULL DEFAULT '',
    version          bigint NOT NULL DEFAULT 1,
    created_at       timestamptz NOT NULL DEFAULT now(),
    updated_at       timestamptz NOT NULL DEFAULT now(),
    PRIMARY KEY (id),
    UNIQUE (org_id, id),
    FOREIGN KEY (org_id, location_id) REFERENCES locations (org_id, id)
);
CREATE INDEX tools_location ON tools (org_id, location_id);

-- unit_mm and measured_span_mm are the tool's facts the model was fitted
-- with, kept with the version: a later change to the tool does not change
-- what a published calibration converts.
CREATE TABLE calibrations (
    org_id           uuid NOT NULL REFERENCES organisations (id),
    id               uuid NOT NULL,
    tool_id          uuid NOT NULL,
    version          int NOT NULL CHECK (version >= 1),
    source           text NOT NULL CHECK (source IN ('maker_table', 'known_tension')),
    notes            text NOT NULL DEFAULT '',
    unit_mm          double precision NOT NULL CHECK (unit_mm > 0 AND unit_mm <= 1),
    measured_span_mm double precision,
    columns          jsonb NOT NULL,
    model_version    int NOT NULL,
    model            jsonb NOT NULL,
    created_at       timestamptz NOT NULL DEFAULT now(),
    PRIMARY KEY (id),
    UNIQUE (org_id, id),
    UNIQUE (org_id, tool_id, version),
    FOREIGN KEY (org_id, tool_id) REFERENCES tools (org_id, id)
);

-- A published calibration never changes: conversions and audits kept for
-- warranty name it by id and version.
-- +goose StatementBegin
CREATE FUNCTION calibrations_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION 'calibration versions are immutable' USING ERRCODE = 'integrity_constraint_violation';
END;
$$;
-- +goose StatementEnd
CREATE TRIGGER calibrations_immutable BEFORE UPDATE OR DELETE ON calibrations
    FOR EACH ROW EXECUTE FUNCTION calibrations_immutable();

-- +goose Down
DROP TABLE calibrations;
DROP FUNCTION calibrations_immutable();
DROP TABLE tools;
