package service

import (
	"strconv"
	"time"

	"github.com/google/uuid"
)

// Role orders what a key may do: read < write < admin.
type Role string

// Roles.
const (
	RoleRead  Role = "read"
	RoleWrite Role = "write"
	RoleAdmin Role = "admin"
)

// rank gives each role its order; unknown roles rank below read.
func (r Role) rank() int {
	switch r {
	case RoleRead:
		return 1
	case RoleWrite:
		return 2
	case RoleAdmin:
		return 3
	}
	return 0
}

// Valid reports whether r is a known role.
func (r Role) Valid() bool { return r.rank() > 0 }

// AtLeast reports whether r allows what min allows.
func (r Role) AtLeast(min Role) bool { return r.rank() >= min.rank() && r.rank() > 0 }

// Principal is the authenticated caller: one API key of one organisation.
type Principal struct {
	OrgID      uuid.UUID
	OrgName    string
	KeyID      uuid.UUID
	LocationID *uuid.UUID
	Role       Role
}

// Bound reports whether the key is held to one location.
func (p Principal) Bound() bool { return p.LocationID != nil }

// Reaches reports whether the caller may see and change what is held at
// location id: every location for a key of the whole organisation, its own
// for a key held to one. To a held key the organisation's other locations,
// and their builds, quotes, audits and stock levels, are as another
// organisation's: ids in a path are 404, ids in a body are 422, lists
// leave them out. The catalog, the price list, tools and calibrations are
// the organisation's and readable by every key (see README.md).
func (p Principal) Reaches(id uuid.UUID) bool { return p.LocationID == nil || *p.LocationID == id }

// Organisation is a tenant: a shop or a chain of shops.
type Organisation struct {
	ID        uuid.UUID
	Name      string
	CreatedAt time.Time
}

// Location is one of an organisation's shops.
type Location struct {
	ID       uuid.UUID `json:"id"`
	OrgID    uuid.UUID `json:"-"`
	Name     string    `json:"name"`
	Code     string    `json:"code"`
	Timezone string    `json:"timezone"`
	Address  string    `json:"address"`
	// TaxRatePPM is the sales tax on quotes, in parts per million (200000 = 20 %).
	TaxRatePPM int64     `json:"tax_rate_ppm"`
	Version    int64     `json:"-"`
	CreatedAt  time.Time `json:"created_at"`
	UpdatedAt  time.Time `json:"updated_at"`
}

// ETag is the location's entity tag for optimistic concurrency.
func (l Location) ETag() string { return ETag(l.ID, l.Version) }

// ETag formats a strong entity tag from an id and a version.
func ETag(id uuid.UUID, version int64) string {
	return `"` + id.String() + "." + strconv.FormatInt(version, 10) + `"`
}

// LocationPatch holds the fields a PATCH may change; nil leaves a field.
type LocationPatch struct {
	Name       *string `json:"name"`
	Code       *string `json:"code"`
	Timezone   *string `json:"timezone"`
	Address    *string `json:"address"`
	TaxRatePPM *int64  `json:"tax_rate_ppm"`
}

// APIKey is a stored key: only its hash and a display prefix are kept.
type APIKey struct {
	ID         uuid.UUID
	OrgID      uuid.UUID
	LocationID *uuid.UUID
	Role       Role
	Name       string
	Prefix     string
	Hash       []byte
	CreatedAt  time.Time
	RevokedAt  *time.Time
}

// Page asks for one page of a list.
type Page struct {
	Limit int
	// After is the id of the last item of the previous page (zero: from the start).
	After uuid.UUID
}

// Page size bounds for every list.
const (
	DefaultPageSize = 50
	MaxPageSize     = 200
)
