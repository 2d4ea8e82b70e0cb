package store_test

import (
	"context"
	"errors"
	"testing"
	"time"

	"github.com/google/uuid"

	"wheelbench/service"
	"wheelbench/store"
	"wheelbench/store/storetest"
)

func newStore(t *testing.T) *store.Store {
	t.Helper()
	return store.New(storetest.Pool(t))
}

func TestLocationsScopedAndVersioned(t *testing.T) {
	ctx := context.Background()
	st := newStore(t)
	a, b := uuid.Must(uuid.NewV7()), uuid.Must(uuid.NewV7())
	for _, id := range []uuid.UUID{a, b} {
		if err := st.CreateOrganisation(ctx, service.Organisation{ID: id, Name: "org", CreatedAt: time.Now()}); err != nil {
			t.Fatal(err)
		}
	}
	l := service.Location{ID: uuid.Must(uuid.NewV7()), OrgID: a, Name: "bench one", Timezone: "UTC", Version: 1, CreatedAt: time.Now(), UpdatedAt: time.Now()}
	if err := st.CreateLocation(ctx, l); err != nil {
		t.Fatal(err)
	}
	if _, err := st.GetLocation(ctx, b, l.ID); !errors.Is(err, service.ErrNotFound) {
		t.Fatalf("another organisation read the location: %v", err)
	}
	name := "bench two"
	got, err := st.UpdateLocation(ctx, a, l.ID, 1, service.LocationPatch{Name: &name})
	if err != nil || got.Name != name || got.Version != 2 {
		t.Fatalf("update: %+v %v", got, err)
	}
	if _, err := st.UpdateLocation(ctx, a, l.ID, 1, service.LocationPatch{Name: &name}); !errors.Is(err, service.ErrPreconditionFailed) {
		t.Fatalf("stale version accepted: %v", err)
	}
	if _, err := st.UpdateLocation(ctx, b, l.ID, 2, service.LocationPatch{Name: &name}); !errors.Is(err, service.ErrPreconditionFailed) && !errors.Is(err, service.ErrNotFound) {
		t.Fatalf("another organisation updated the location: %v", err)
	}
	ls, err := st.ListLocations(ctx, a, service.Page{Limit: 10})
	if err != nil || len(ls) != 1 {
		t.Fatalf("list: %v %v", ls, err)
	}
}

func TestMigrateTwiceIsSafe(t *testing.T) {
	pool := storetest.Pool(t)
	// The template already holds every migration; running them again and
	// concurrently must find nothing to do and fail nowhere.
	errs := make(chan error, 3)
	for range 3 {
		go func() { errs <- store.Migrate(context.Background(), pool) }()
	}
	for range 3 {
		if err := <-errs; err != nil {
			t.Fatal(err)
		}
	}
}

// newOrg creates an organisation for a store test and returns its id.
func newOrg(t *testing.T, st *store.Store, name string) uuid.UUID {
	t.Helper()
	id := uuid.Must(uuid.NewV7())
	if err := st.CreateOrganisation(context.Background(), service.Organisation{ID: id, Name: name, CreatedAt: time.Now()}); err != nil {
		t.Fatal(err)
	}
	return id
}
