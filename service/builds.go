package service

import (
	"context"
	"errors"
	"fmt"
	"time"
	"unicode/utf8"

	"github.com/google/uuid"

	"wheelbench/service/field"
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
	"wheelbench/service/tension"
)

// BuildStatus is where a build is in the shop.
type BuildStatus string

// Build statuses: draft → quoted → ordered → in_progress → done, or
// cancelled from any but done.
const (
	BuildDraft      BuildStatus = "draft"
	BuildQuoted     BuildStatus = "quoted"
	BuildOrdered    BuildStatus = "ordered"
	BuildInProgress BuildStatus = "in_progress"
	BuildDone       BuildStatus = "done"
	BuildCancelled  BuildStatus = "cancelled"
)

var nextStatus = map[BuildStatus]BuildStatus{
	BuildDraft: BuildQuoted, BuildQuoted: BuildOrdered, BuildOrdered: BuildInProgress, BuildInProgress: BuildDone,
}

// Valid reports whether s is a known status.
func (s BuildStatus) Valid() bool {
	_, ok := nextStatus[s]
	return ok || s == BuildDone || s == BuildCancelled
}

// CanMoveTo reports whether a build may go from s to t: one step forward,
// or to cancelled from anything but done (and cancelled).
func (s BuildStatus) CanMoveTo(t BuildStatus) bool {
	if t == BuildCancelled {
		return s != BuildDone && s != BuildCancelled
	}
	return nextStatus[s] == t
}

// Build is one wheel job: the spec as given, and the snapshot computed from
// it when the build was created (kept for warranty, never recomputed).
type Build struct {
	ID          uuid.UUID     `json:"id"`
	OrgID       uuid.UUID     `json:"-"`
	LocationID  uuid.UUID     `json:"location_id"`
	ExternalRef string        `json:"external_ref"`
	Status      BuildStatus   `json:"status"`
	Spec        BuildSpec     `json:"spec"`
	Snapshot    BuildSnapshot `json:"snapshot"`
	Notes       string        `json:"notes"`
	Version     int64         `json:"-"`
	CreatedAt   time.Time     `json:"created_at"`
	UpdatedAt   time.Time     `json:"updated_at"`
}

// ETag is the build's entity tag.
func (b Build) ETag() string { return ETag(b.ID, b.Version) }

// BuildSnapshot is what the service computed for a build.
type BuildSnapshot struct {
	// Parts names the catalog parts the spec referred to, by role.
	Parts BuildParts `json:"parts"`
	// Resolved is the compatibility input with catalog parts filled in.
	Resolved CompatibilityInput `json:"resolved_spec"`
	// StockSource says where the stock lengths came from: "location_stock"
	// (the spoke part's stock at the build's location), "spec" or "none".
	StockSource string `json:"stock_source"`
	// Compatibility is the fit verdict, findings, changes and the lengths.
	Compatibility CompatibilityReport `json:"compatibility"`
	// TargetTensionsN are each side's tensions at the target.
	TargetTensionsN Sides `json:"target_tensions_n"`
	// TargetReadings are the dial readings to aim for on the location's
	// default tensiometer, when it has a calibration.
	TargetReadings *TargetReadings `json:"target_readings,omitempty"`
	Cautions       []string        `json:"cautions"`
}

// Sides is a per-side pair.
type Sides struct {
	Left  float64 `json:"left"`
	Right float64 `json:"right"`
}

// TargetReadings are the readings to aim for per side on one tool.
type TargetReadings struct {
	ToolID        uuid.UUID `json:"tool_id"`
	CalibrationID uuid.UUID `json:"calibration_id"`
	// MeasuredSection is the section of the spoke the readings are for.
	MeasuredSection MeasuredSection `json:"measured_section"`
	Left            Aim             `json:"left"`
	Right           Aim             `json:"right"`
}

// Aim is one side's reading to aim for: the conversion of the side's target
// tension (Target), or the reason the calibration refused it (Refused).
// Its members are the Target's, or refused alone: the embedded pointer's
// members are left out while it is nil.
type Aim struct {
	*tension.Target
	Refused string `json:"refused,omitempty"`
}

// BuildParts are the catalog part ids a build uses (nil: given inline).
type BuildParts struct {
	Hub     *uuid.UUID  `json:"hub,omitempty"`
	Rim     *uuid.UUID  `json:"rim,omitempty"`
	Spoke   *uuid.UUID  `json:"spoke,omitempty"`
	Nipple  *uuid.UUID  `json:"nipple,omitempty"`
	Tyre    *uuid.UUID  `json:"tyre,omitempty"`
	Washers []uuid.UUID `json:"washers,omitempty"`
}

// BuildSpec is a build's spec: the compatibility check's input in which each
// part may instead be named by a catalog id (hub_id, rim_id, spoke_id,
// nipple_id, tyre_id, washer_ids); nil is absent.
type BuildSpec struct {
	SpokeCount     int             `json:"spoke_count"`
	Hub            *geometry.Hub   `json:"hub,omitempty"`
	HubID          *uuid.UUID      `json:"hub_id,omitempty"`
	Rim            *geometry.Rim   `json:"rim,omitempty"`
	RimID          *uuid.UUID      `json:"rim_id,omitempty"`
	Spoke          *spoke.Spec     `json:"spoke,omitempty"`
	SpokeID        *uuid.UUID      `json:"spoke_id,omitempty"`
	Nipple         *fit.Nipple     `json:"nipple,omitempty"`
	NippleID       *uuid.UUID      `json:"nipple_id,omitempty"`
	Washers        *[]fit.Washer   `json:"washers,omitempty"`
	WasherIDs      []uuid.UUID     `json:"washer_ids,omitempty"`
	Tyre           *fit.Tyre       `json:"tyre,omitempty"`
	TyreID         *uuid.UUID      `json:"tyre_id,omitempty"`
	FrameSpacingMM *float64        `json:"frame_spacing_mm,omitempty"`
	Crosses        geometry.Cross  `json:"crosses"`
	TargetTensionN float64         `json:"target_tension_n"`
	Stock          *geometry.Stock `json:"stock,omitempty"`
}

// BuildInput creates a build.
type BuildInput struct {
	Spec        BuildSpec `json:"spec"`
	ExternalRef string    `json:"external_ref"`
	LocationID  uuid.UUID `json:"location_id"`
}

// BuildPatch changes a build's status or notes.
type BuildPatch struct {
	Status *BuildStatus `json:"status"`
	Notes  *string      `json:"notes"`
}

// BuildFilter narrows a build list.
type BuildFilter struct {
	Status       BuildStatus
	LocationID   *uuid.UUID
	ExternalRef  *string
	UpdatedAfter *time.Time
}

// resolvePart returns the part named inline or by id (nil when neither),
// with the catalog id when it came from the catalog.
func resolvePart[T any](ctx context.Context, s *Service, orgID uuid.UUID, kind PartKind, inline *T, id *uuid.UUID, member string) (*T, *uuid.UUID, error) {
	switch {
	case inline != nil && id != nil:
		return nil, nil, field.Invalid("/spec/"+member+"_id", "give %s inline or as %s_id, not both", member, member)
	case id != nil:
		p, err := s.store.GetPart(ctx, orgID, *id)
		if errors.Is(err, ErrNotFound) {
			return nil, nil, field.Unprocessable("/spec/"+member+"_id", "no such part in this organisation's catalog")
		}
		if err != nil {
			return nil, nil, err
		}
		if p.Kind != kind {
			return nil, nil, field.Unprocessable("/spec/"+member+"_id", "part %s is a %s, not a %s", id, p.Kind, kind)
		}
		dims, ok := p.Dimensions.(*T)
		if !ok || dims == nil {
			return nil, nil, field.Unprocessable("/spec/"+member+"_id", "part %s's dimensions do not describe a %s", id, kind)
		}
		return dims, id, nil
	}
	return inline, nil, nil
}

// specPart is resolvePart for one of a spec's parts: it records the
// catalog id in *catalogID and any error, or the part's absence when it is
// required, in *errs.
func specPart[T any](ctx context.Context, s *Service, orgID uuid.UUID, kind PartKind, inline *T, id *uuid.UUID, member string,
	required bool, catalogID **uuid.UUID, errs *[]error) *T {
	v, cid, err := resolvePart(ctx, s, orgID, kind, inline, id, member)
	*catalogID = cid
	switch {
	case err != nil:
		*errs = append(*errs, err)
	case v == nil && required:
		*errs = append(*errs, field.Invalid("/spec/"+member, "give the %s inline or as %s_id", member, member))
	}
	return v
}

// resolveSpec turns a build spec into a compatibility input, reading the
// catalog parts it names.
func (s *Service) resolveSpec(ctx context.Context, orgID, locationID uuid.UUID, spec BuildSpec) (CompatibilityInput, BuildParts, string, error) {
	var parts BuildParts
	var errs []error
	hub := specPart(ctx, s, orgID, PartHub, spec.Hub, spec.HubID, "hub", true, &parts.Hub, &errs)
	rim := specPart(ctx, s, orgID, PartRim, spec.Rim, spec.RimID, "rim", true, &parts.Rim, &errs)
	spk := specPart(ctx, s, orgID, PartSpoke, spec.Spoke, spec.SpokeID, "spoke", true, &parts.Spoke, &errs)
	nip := specPart(ctx, s, orgID, PartNipple, spec.Nipple, spec.NippleID, "nipple", true, &parts.Nipple, &errs)
	tyre := specPart(ctx, s, orgID, PartTyre, spec.Tyre, spec.TyreID, "tyre", false, &parts.Tyre, &errs)
	var washers []fit.Washer
	if spec.Washers != nil {
		washers = *spec.Washers
	}
	if len(spec.WasherIDs) > 0 {
		if spec.Washers != nil {
			errs = append(errs, field.Invalid("/spec/washer_ids", "give washers inline or as washer_ids, not both"))
		}
		washers = make([]fit.Washer, 0, len(spec.WasherIDs))
		for i, id := range spec.WasherIDs {
			w, _, err := resolvePart[fit.Washer](ctx, s, orgID, PartWasher, nil, &id, "washer")
			err = field.Map(err, func(string) string { return fmt.Sprintf("/spec/washer_ids/%d", i) })
			if err != nil {
				errs = append(errs, err)
				continue
			}
			washers = append(washers, *w)
			parts.Washers = append(parts.Washers, id)
		}
	}
	if err := errors.Join(errs...); err != nil {
		return CompatibilityInput{}, parts, "", err
	}
	in := CompatibilityInput{SpokeCount: spec.SpokeCount, Hub: *hub, Rim: *rim, Spoke: *spk, Nipple: *nip,
		Washers: washers, Tyre: tyre, FrameSpacingMM: spec.FrameSpacingMM, Crosses: spec.Crosses, TargetTensionN: spec.TargetTensionN,
		IncludeLacing: true}
	source := "none"
	if spec.Stock != nil {
		in.Stock, source = spec.Stock, "spec"
	} else if parts.Spoke != nil {
		st, err := s.store.GetPartStock(ctx, orgID, *parts.Spoke)
		if err != nil {
			return CompatibilityInput{}, parts, "", err
		}
		var lengths []float64
		for _, l := range st.Levels {
			if l.LocationID == locationID && l.Quantity > 0 && l.LengthMM > 0 {
				lengths = append(lengths, l.LengthMM)
			}
		}
		if len(lengths) > 0 {
			in.Stock, source = &geometry.Stock{LengthsMM: lengths}, "location_stock"
		}
	}
	return in, parts, source, nil
}

// CreateBuild computes a build's snapshot — parts resolved, fit verdict,
// spoke lengths and stock lengths, target tensions and readings — and
// stores it as a draft.
func (s *Service) CreateBuild(ctx context.Context, p Principal, in BuildInput) (Build, error) {
	if utf8.RuneCountInString(in.ExternalRef) > 200 {
		return Build{}, field.Invalid("/external_ref", "external_ref must be at most 200 characters")
	}
	// An org-scoped read, so that a location of another organisation is a
	// 422 naming the field; the database's foreign key holds it as well.
	_, cal, err := s.locationWithCalibration(ctx, p.OrgID, in.LocationID)
	if errors.Is(err, ErrNotFound) || (err == nil && !p.Reaches(in.LocationID)) {
		return Build{}, field.Unprocessable("/location_id", "no such location in this organisation")
	} else if err != nil {
		return Build{}, err
	}
	resolved, parts, source, err := s.resolveSpec(ctx, p.OrgID, in.LocationID, in.Spec)
	if err != nil {
		return Build{}, err
	}
	rep, err := s.CheckCompatibility(resolved)
	if err != nil {
		return Build{}, field.Under("/spec", err)
	}
	if proposesStandardWasher(rep) {
		// A washer to buy is proposed: the catalog's own is proposed
		// instead when one suits (read only when needed).
		if resolved.CatalogWashers, err = s.catalogWashers(ctx, p.OrgID); err != nil {
			return Build{}, err
		}
		if len(resolved.CatalogWashers) > 0 {
			if rep, err = s.CheckCompatibility(resolved); err != nil {
				return Build{}, field.Under("/spec", err)
			}
		}
	}
	snap := BuildSnapshot{Parts: parts, Resolved: resolved, StockSource: source, Compatibility: rep,
		TargetTensionsN: Sides{Left: rep.Left.TensionN, Right: rep.Right.TensionN}, Cautions: rep.Cautions}
	if tr, cautions := targetReadings(cal, resolved, snap.TargetTensionsN); tr != nil {
		snap.TargetReadings = tr
		snap.Cautions = appendUnique(snap.Cautions, cautions...)
	}
	if snap.Cautions == nil {
		snap.Cautions = []string{}
	}
	now := s.now().UTC()
	b := Build{ID: uuid.Must(uuid.NewV7()), OrgID: p.OrgID, LocationID: in.LocationID, ExternalRef: in.ExternalRef,
		Status: BuildDraft, Spec: in.Spec, Snapshot: snap, Version: 1, CreatedAt: now, UpdatedAt: now}
	if err := s.store.CreateBuild(ctx, b); err != nil {
		return Build{}, err
	}
	return b, nil
}

func appendUnique(list []string, more ...string) []string {
	for _, m := range more {
		found := false
		for _, l := range list {
			found = found || l == m
		}
		if !found {
			list = append(list, m)
		}
	}
	return list
}

// targetReadings converts each side's target tension to the reading to aim
// for on the location's default tensiometer, cal (its newest calibration).
// nil when the location has no calibrated tool; a side the calibration cannot
// convert carries the reason instead of a reading, and a caution.
func targetReadings(cal *Calibration, in CompatibilityInput, t Sides) (*TargetReadings, []string) {
	if cal == nil || cal.Model == nil {
		return nil, nil
	}
	out := &TargetReadings{ToolID: cal.ToolID, CalibrationID: cal.ID, MeasuredSection: measuredSectionOf(in.Spoke)}
	var cautions []string
	for _, side := range []struct {
		name string
		n    float64
		dst  *Aim
	}{{"left", t.Left, &out.Left}, {"right", t.Right, &out.Right}} {
		tg, err := cal.Model.TargetForSpoke(in.Spoke, side.n)
		if err != nil {
			side.dst.Refused = err.Error()
			cautions = append(cautions, fmt.Sprintf("The %s side's target reading could not be computed from the location's tensiometer calibration (%s); calibrate the tool for this spoke before tensioning.", side.name, err.Error()))
			continue
		}
		side.dst.Target = &tg
		cautions = append(cautions, tg.Cautions...)
	}
	return out, cautions
}

// proposesStandardWasher reports whether rep proposes washers that are
// neither given nor the catalog's.
func proposesStandardWasher(rep CompatibilityReport) bool {
	for _, c := range rep.Changes {
		if c.Kind == fit.ChangeAddWashers && !c.FromGiven && c.PartID == "" {
			return true
		}
	}
	return false
}

// maxCatalogWashers bounds the catalog washers a build considers.
const maxCatalogWashers = 200

// catalogWashers reads the organisation's washer parts as the fit rules
// take them, each named by its part id.
func (s *Service) catalogWashers(ctx context.Context, orgID uuid.UUID) ([]fit.CatalogWasher, error) {
	ps, err := s.store.ListParts(ctx, orgID, PartFilter{Kind: PartWasher}, Page{Limit: maxCatalogWashers})
	if err != nil {
		return nil, err
	}
	out := make([]fit.CatalogWasher, 0, len(ps))
	for _, p := range ps {
		if w, ok := p.Dimensions.(*fit.Washer); ok && w != nil {
			out = append(out, fit.CatalogWasher{Washer: *w, PartID: p.ID.String()})
		}
	}
	return out, nil
}

// MeasuredSection names the section of a spoke a tensiometer sits on.
type MeasuredSection struct {
	Name        string  `json:"name"`
	Profile     string  `json:"profile"`
	DiameterMM  float64 `json:"diameter_mm,omitempty"`
	WidthMM     float64 `json:"width_mm,omitempty"`
	ThicknessMM float64 `json:"thickness_mm,omitempty"`
}

func measuredSectionOf(sp spoke.Spec) MeasuredSection {
	r, _ := sp.Resolve(false)
	m := r.Measured
	out := MeasuredSection{Name: r.MeasuredName, Profile: string(m.Profile), DiameterMM: m.DiameterMM, WidthMM: m.WidthMM, ThicknessMM: m.ThicknessMM}
	if out.Profile == "" {
		out.Profile = string(spoke.Round)
	}
	return out
}

// GetBuild reads one build.
func (s *Service) GetBuild(ctx context.Context, p Principal, id uuid.UUID) (Build, error) {
	return s.reachableBuild(ctx, p, id)
}

// reachableBuild reads a build at a location p reaches: any other is
// ErrNotFound, as another organisation's is.
func (s *Service) reachableBuild(ctx context.Context, p Principal, id uuid.UUID) (Build, error) {
	b, err := s.store.GetBuild(ctx, p.OrgID, id)
	if err == nil && !p.Reaches(b.LocationID) {
		return Build{}, ErrNotFound
	}
	return b, err
}

// ListBuilds lists builds by id with filters; a key held to one location
// lists that location's.
func (s *Service) ListBuilds(ctx context.Context, p Principal, f BuildFilter, page Page) ([]Build, error) {
	if f.Status != "" && !f.Status.Valid() {
		return nil, field.Invalid("query:status", "status must be one of draft, quoted, ordered, in_progress, done, cancelled")
	}
	if p.Bound() {
		if f.LocationID != nil && *f.LocationID != *p.LocationID {
			return nil, nil
		}
		f.LocationID = p.LocationID
	}
	return s.store.ListBuilds(ctx, p.OrgID, f, page)
}

// UpdateBuild moves a build's status one step (or to cancelled) and sets
// its notes, if ifMatch is its current ETag. An illegal move is ErrConflict.
func (s *Service) UpdateBuild(ctx context.Context, p Principal, id uuid.UUID, ifMatch string, patch BuildPatch) (Build, error) {
	if patch.Status != nil && !patch.Status.Valid() {
		return Build{}, field.Invalid("/status", "status must be one of draft, quoted, ordered, in_progress, done, cancelled")
	}
	if patch.Notes != nil && utf8.RuneCountInString(*patch.Notes) > 10000 {
		return Build{}, field.Invalid("/notes", "notes must be at most 10000 characters")
	}
	cur, err := s.reachableBuild(ctx, p, id)
	if err != nil {
		return Build{}, err
	}
	if err := checkIfMatch(ifMatch, cur.ETag(), "build"); err != nil {
		return Build{}, err
	}
	if patch.Status != nil && *patch.Status != cur.Status && !cur.Status.CanMoveTo(*patch.Status) {
		return Build{}, fmt.Errorf("%w: a build cannot move from %s to %s", ErrConflict, cur.Status, *patch.Status)
	}
	if patch.Status != nil && *patch.Status == cur.Status {
		patch.Status = nil
	}
	return s.store.UpdateBuild(ctx, p.OrgID, id, cur.Version, cur.Status, patch)
}
