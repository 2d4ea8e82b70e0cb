package store_test

import (
	"context"
	"testing"
	"time"

	"github.com/google/uuid"

	"wheelbench/service"
)

// TestEarlierStoredBuildsRead: builds written before the spec and the aim
// readings were kept typed still read. Such a row holds the spec as it was
// sent (spacing, 2.0 for 2) and each side's aim reading as the bytes of the
// conversion or of {"refused": reason}; they read into the typed spec and
// aims with the same values.
func TestEarlierStoredBuildsRead(t *testing.T) {
	ctx := context.Background()
	st := newStore(t)
	org := newOrg(t, st, "earlier rows (test)")
	loc := service.Location{ID: uuid.Must(uuid.NewV7()), OrgID: org, Name: "bench", Timezone: "UTC", Version: 1, CreatedAt: time.Now(), UpdatedAt: time.Now()}
	if err := st.CreateLocation(ctx, loc); err != nil {
		t.Fatal(err)
	}
	hub := uuid.Must(uuid.NewV7())
	spec := `{ "spoke_count": 32,  "hub_id": "` + hub.String() + `",
	  "rim": {"holes": 32, "erd_mm": 599.0, "bsd_mm": 622, "inner_width_mm": 19, "hole_diameter_mm": 4.2},
	  "crosses": {"left": 3, "right": 2}, "target_tension_n": 1100.0, "washers": [] }`
	snapshot := `{"parts": {"hub": "` + hub.String() + `"}, "stock_source": "none", "cautions": ["check the rim"],
	  "target_tensions_n": {"left": 640.5, "right": 1100},
	  "target_readings": {"tool_id": "` + uuid.NewString() + `", "calibration_id": "` + uuid.NewString() + `",
	    "measured_section": {"name": "body", "profile": "round", "diameter_mm": 2},
	    "left": {"tension_n": 640.5, "tension_kgf": 65.31, "tension_lbf": 144.0, "reading": 271.4, "reading_interval": [270.1, 272.8],
	             "reliable": true, "status": "calibrated", "method": "column_monotone_cubic", "delta_diameter_mm": 0,
	             "stiffness_ratio": 1, "resolution_n_per_unit": 21.5, "warnings": [], "cautions": []},
	    "right": {"refused": "the calibration has no column of this material"}}}`
	id := uuid.Must(uuid.NewV7())
	const q = `INSERT INTO builds (org_id, id, location_id, external_ref, status, spec, snapshot, notes, version, created_at, updated_at)
	  VALUES ($1, $2, $3, 'EARLIER-1', 'draft', $4, $5, '', 1, now(), now())`
	if _, err := st.Pool().Exec(ctx, q, org, id, loc.ID, spec, snapshot); err != nil {
		t.Fatal(err)
	}
	b, err := st.GetBuild(ctx, org, id)
	if err != nil {
		t.Fatal(err)
	}
	s := b.Spec
	if s.SpokeCount != 32 || s.HubID == nil || *s.HubID != hub || s.Rim == nil || s.Rim.ERDMM != 599 || s.Crosses.Left == nil ||
		*s.Crosses.Left != 3 || *s.Crosses.Right != 2 || s.TargetTensionN != 1100 || s.Washers == nil || len(*s.Washers) != 0 {
		t.Errorf("spec %+v", s)
	}
	tr := b.Snapshot.TargetReadings
	if tr == nil {
		t.Fatal("no target readings")
	}
	if l := tr.Left; l.Target == nil || l.Reading != 271.4 || l.ReadingInterval != [2]float64{270.1, 272.8} || !l.Reliable || l.Refused != "" {
		t.Errorf("left aim %+v", l)
	}
	if r := tr.Right; r.Target != nil || r.Refused != "the calibration has no column of this material" {
		t.Errorf("right aim %+v", r)
	}
	if b.Snapshot.TargetTensionsN.Left != 640.5 || len(b.Snapshot.Cautions) != 1 || b.Snapshot.Parts.Hub == nil {
		t.Errorf("snapshot %+v", b.Snapshot)
	}
}
