package service

import (
	"context"
	"sync"
	"time"

	"github.com/google/uuid"
)

// locationCache keeps, for a short time, what build creation reads about
// a location: that it exists and the newest calibration of its default
// tensiometer. Locations are never deleted; a calibration published or a
// tool changed through this process drops the organisation's entries at
// once, one published through another replica is seen within the TTL. The
// snapshot records the calibration id it used.
type locationCache struct {
	ttl time.Duration
	mu  sync.Mutex
	m   map[[2]uuid.UUID]locationEntry
}

type locationEntry struct {
	loc     Location
	cal     *Calibration
	expires time.Time
}

func newLocationCache(ttl time.Duration) *locationCache {
	return &locationCache{ttl: ttl, m: map[[2]uuid.UUID]locationEntry{}}
}

// locationWithCalibration is Store.LocationWithCalibration through the cache.
func (s *Service) locationWithCalibration(ctx context.Context, orgID, locationID uuid.UUID) (Location, *Calibration, error) {
	c := s.locations
	key := [2]uuid.UUID{orgID, locationID}
	now := s.now()
	c.mu.Lock()
	e, ok := c.m[key]
	c.mu.Unlock()
	if ok && now.Before(e.expires) {
		return e.loc, e.cal, nil
	}
	loc, cal, err := s.store.LocationWithCalibration(ctx, orgID, locationID)
	if err != nil {
		return loc, cal, err
	}
	c.mu.Lock()
	if len(c.m) > 10000 {
		clear(c.m)
	}
	c.m[key] = locationEntry{loc: loc, cal: cal, expires: now.Add(c.ttl)}
	c.mu.Unlock()
	return loc, cal, nil
}

// forgetOrganisation drops an organisation's cached locations (after a
// location, tool or calibration changed).
func (c *locationCache) forgetOrganisation(orgID uuid.UUID) {
	c.mu.Lock()
	for k := range c.m {
		if k[0] == orgID {
			delete(c.m, k)
		}
	}
	c.mu.Unlock()
}
