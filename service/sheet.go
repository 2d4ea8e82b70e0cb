package service

import (
	"context"
	"errors"
	"fmt"

	"github.com/google/uuid"
)

// BuildSheet is what a build's bench sheet shows, read for the view that
// draws it (api/sheet): the build with its stored snapshot, its location,
// the catalog parts it names, and the tensiometer and calibration version
// its aim readings were computed on. Nothing here is recomputed: the
// sheet prints the snapshot kept for warranty.
type BuildSheet struct {
	Build    Build
	Location Location
	// Parts are the build's parts in the order they are pulled: hub, rim,
	// spoke, nipple, washers, tyre (an absent tyre is left out).
	Parts []SheetPart
	// ChangeParts are the catalog parts the snapshot's changes propose
	// (a catalog washer to add), by part id as the change names it.
	ChangeParts map[string]Part
	// Tool and Calibration are those the snapshot's target readings were
	// computed on; nil when it has none, or when they can no longer be
	// read (Missing then says which).
	Tool        *Tool
	Calibration *Calibration
	// Missing lists, in plain words, what the snapshot names but could not
	// be read now (a part no longer in the catalog, say).
	Missing []string
}

// SheetPart is one part of a build.
type SheetPart struct {
	// Role is hub, rim, spoke, nipple, washer or tyre.
	Role PartKind
	// Part is the catalog part, from the location's stock; nil when it was
	// given inline in the spec (supplied by the customer) or can no longer
	// be read (CatalogID is then set).
	Part      *Part
	CatalogID *uuid.UUID
}

// BuildSheet reads what a build's bench sheet needs. ErrNotFound when the
// build is not the caller's organisation's.
func (s *Service) BuildSheet(ctx context.Context, p Principal, id uuid.UUID) (BuildSheet, error) {
	b, err := s.GetBuild(ctx, p, id) // the same read, and the same access rules, as GET /v1/builds/{id}
	if err != nil {
		return BuildSheet{}, err
	}
	out := BuildSheet{Build: b, ChangeParts: map[string]Part{}}
	if out.Location, err = s.store.GetLocation(ctx, p.OrgID, b.LocationID); err != nil {
		return BuildSheet{}, fmt.Errorf("build %s: location %s: %w", b.ID, b.LocationID, notFoundIsInternal(err))
	}
	snap := b.Snapshot
	// part reads a catalog part; a part that is gone is reported, not an
	// error: the snapshot still holds its dimensions.
	part := func(id uuid.UUID) (*Part, error) {
		pt, err := s.store.GetPart(ctx, p.OrgID, id)
		if errors.Is(err, ErrNotFound) {
			out.Missing = append(out.Missing, fmt.Sprintf("catalog part %s is no longer in the catalog", id))
			return nil, nil
		}
		if err != nil {
			return nil, err
		}
		return &pt, nil
	}
	add := func(role PartKind, id *uuid.UUID, present bool) error {
		if !present && id == nil {
			return nil
		}
		sp := SheetPart{Role: role, CatalogID: id}
		if id != nil {
			var err error
			if sp.Part, err = part(*id); err != nil {
				return err
			}
		}
		out.Parts = append(out.Parts, sp)
		return nil
	}
	pp := snap.Parts
	for _, r := range []struct {
		role    PartKind
		id      *uuid.UUID
		present bool
	}{{PartHub, pp.Hub, true}, {PartRim, pp.Rim, true}, {PartSpoke, pp.Spoke, true}, {PartNipple, pp.Nipple, true}} {
		if err := add(r.role, r.id, r.present); err != nil {
			return BuildSheet{}, err
		}
	}
	if len(pp.Washers) > 0 {
		for i := range pp.Washers {
			if err := add(PartWasher, &pp.Washers[i], true); err != nil {
				return BuildSheet{}, err
			}
		}
	} else {
		for range snap.Resolved.Washers {
			if err := add(PartWasher, nil, true); err != nil {
				return BuildSheet{}, err
			}
		}
	}
	if err := add(PartTyre, pp.Tyre, snap.Resolved.Tyre != nil); err != nil {
		return BuildSheet{}, err
	}
	for _, c := range snap.Compatibility.Changes {
		if c.PartID == "" {
			continue
		}
		if _, done := out.ChangeParts[c.PartID]; done {
			continue
		}
		pid, err := uuid.Parse(c.PartID)
		if err != nil {
			continue // not a part id: the change is printed without it
		}
		pt, err := part(pid)
		if err != nil {
			return BuildSheet{}, err
		}
		if pt != nil {
			out.ChangeParts[c.PartID] = *pt
		}
	}

	tr := snap.TargetReadings
	if tr == nil {
		return out, nil
	}
	tool, err := s.store.GetTool(ctx, p.OrgID, tr.ToolID)
	switch {
	case errors.Is(err, ErrNotFound):
		out.Missing = append(out.Missing, fmt.Sprintf("tensiometer %s can no longer be read", tr.ToolID))
	case err != nil:
		return BuildSheet{}, err
	default:
		out.Tool = &tool
	}
	cal, err := s.store.GetCalibration(ctx, p.OrgID, tr.CalibrationID)
	switch {
	case errors.Is(err, ErrNotFound):
		out.Missing = append(out.Missing, fmt.Sprintf("calibration %s can no longer be read", tr.CalibrationID))
	case err != nil:
		return BuildSheet{}, err
	default:
		out.Calibration = &cal
	}
	return out, nil
}

// notFoundIsInternal turns ErrNotFound for something a stored build points
// at into a plain error: the build exists, so the answer is not a 404.
func notFoundIsInternal(err error) error {
	if errors.Is(err, ErrNotFound) {
		return errors.New(err.Error())
	}
	return err
}
