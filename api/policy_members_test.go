package api_test

import (
	"bytes"
	"strings"
	"testing"

	"wheelbench/service"
)

// The shared hub, flange and spoke members (spokes, exit, exit_angle_deg,
// kind, brake, holes, profile, sections, measured_section, thread) and
// include_lacing reach the strict decoder by several roads: the spoke-length
// fast path and its fallback, the spec-validated routes, a build's spec
// decoded in service/, a part's dimensions, and the whole spoke that
// conversions and audits take. Each road must apply the one policy to them.

// sharedHub is a hub with every shared member set (invented dimensions).
func sharedHub() map[string]any {
	return map[string]any{"holes": 32, "kind": "bicycle", "type": "straight_pull", "brake": "rotor", "driven": false, "spacing_mm": 100,
		"left":  map[string]any{"pcd_mm": 45, "center_to_flange_mm": 30, "hole_diameter_mm": 2.6, "thickness_mm": 3, "spokes": 16, "exit": "tangential"},
		"right": map[string]any{"pcd_mm": 45, "center_to_flange_mm": 20, "hole_diameter_mm": 2.6, "thickness_mm": 3, "spokes": 16, "exit": "angled", "exit_angle_deg": 80}}
}

// sharedSpoke is a butted spoke measured on its thin middle.
func sharedSpoke() map[string]any {
	return map[string]any{"profile": "round", "diameter_mm": 2.0, "material": "stainless_steel", "measured_section": "section_1",
		"sections": []any{map[string]any{"length_mm": 200, "profile": "round", "diameter_mm": 1.8}},
		"thread":   map[string]any{"size_mm": 2.0, "tpi": 56}}
}

func sharedWheel() map[string]any {
	return map[string]any{"spoke_count": 32, "hub": sharedHub(), "rim": map[string]any{"erd_mm": 599},
		"crosses": map[string]any{"left": 3, "right": 3}, "spoke": sharedSpoke(), "target_tension_n": 1000,
		"stock": map[string]any{"increment_mm": 2}, "include_lacing": true}
}

// memberKind is what a member holds: 's' string, 'n' number, 'b' boolean.
type sharedMember struct {
	ptr  string
	kind byte
}

var hubMembers = []sharedMember{{"/hub/holes", 'n'}, {"/hub/kind", 's'}, {"/hub/brake", 's'},
	{"/hub/left/spokes", 'n'}, {"/hub/left/exit", 's'}, {"/hub/right/exit_angle_deg", 'n'}}

var spokeMembers = []sharedMember{{"/spoke/profile", 's'}, {"/spoke/measured_section", 's'},
	{"/spoke/sections/0/profile", 's'}, {"/spoke/sections/0/diameter_mm", 'n'}, {"/spoke/thread/tpi", 'n'}}

// refusedAt passes when the route refused the member at pointer ptr: a 400
// naming it, or for the batch a 200 whose wheel slot names it.
func refusedAt(t *testing.T, r response, ptr string) {
	t.Helper()
	if strings.HasSuffix(r.Request.URL.Path, "/batch") && r.StatusCode == 200 {
		if !bytes.Contains(r.body, []byte(`"pointer":"`+ptr+`"`)) {
			t.Errorf("batch: no slot names %s: %.400s", ptr, r.body)
		}
		return
	}
	wantProblemAt(t, r, 400, ptr)
}

// TestSharedMembersUnderThePolicy: on every road, each shared member in
// another letter case, given twice, null, of the wrong JSON kind or (for a
// string) holding U+0000 is refused naming its pointer, and the body with
// every member set as it should be is accepted.
func TestSharedMembersUnderThePolicy(t *testing.T) {
	e := newEnv(t)
	r, w := e.keyA[service.RoleRead], e.keyA[service.RoleWrite]
	sh := e.newShop(10)
	cal, _ := calibrationFixture(e)
	prefixed := func(prefix string, ms ...[]sharedMember) []sharedMember {
		var out []sharedMember
		for _, l := range ms {
			for _, m := range l {
				out = append(out, sharedMember{prefix + m.ptr, m.kind})
			}
		}
		return out
	}
	compat := func() map[string]any {
		m := sharedWheel()
		delete(m, "include_lacing")
		m["spoke"].(map[string]any)["head_diameter_mm"] = 4.0
		m["spoke"].(map[string]any)["elbow_length_mm"] = 2.8
		m["nipple"] = map[string]any{"thread": map[string]any{"size_mm": 2.0, "tpi": 56}, "shank_diameter_mm": 3.9, "head_diameter_mm": 5.6, "length_mm": 12}
		m["rim"] = map[string]any{"holes": 32, "erd_mm": 599, "bsd_mm": 622, "inner_width_mm": 19, "hole_diameter_mm": 4.2}
		return m
	}
	wheelMembers := append([]sharedMember{{"/include_lacing", 'b'}}, prefixed("", hubMembers, spokeMembers)...)
	cases := []struct {
		name, method, path, key string
		body                    map[string]any
		ok                      int
		members                 []sharedMember
	}{
		{"spoke lengths", "POST", "/v1/spoke-lengths", r, sharedWheel(), 200, wheelMembers},
		{"batch", "POST", "/v1/spoke-lengths/batch", r, map[string]any{"wheels": []any{sharedWheel()}}, 200, prefixed("/wheels/0", wheelMembers)},
		{"compatibility check", "POST", "/v1/compatibility-checks", r, compat(), 200, prefixed("", hubMembers, spokeMembers)},
		{"build", "POST", "/v1/builds", w, map[string]any{"location_id": sh.loc, "spec": compat()}, 201, prefixed("/spec", hubMembers, spokeMembers)},
		{"hub part", "POST", "/v1/parts", w, map[string]any{"kind": "hub", "sku": "HUB-SHARED", "name": "hub", "price_minor": 1, "currency": "EUR",
			"dimensions": sharedHub()}, 201, prefixed("/dimensions", []sharedMember{{"/holes", 'n'}, {"/kind", 's'}, {"/brake", 's'},
			{"/left/spokes", 'n'}, {"/left/exit", 's'}, {"/right/exit_angle_deg", 'n'}})},
		{"spoke part", "POST", "/v1/parts", w, map[string]any{"kind": "spoke", "sku": "SPK-SHARED", "name": "spoke", "price_minor": 1, "currency": "EUR",
			"dimensions": sharedSpoke()}, 201, prefixed("/dimensions", []sharedMember{{"/profile", 's'}, {"/measured_section", 's'},
			{"/sections/0/profile", 's'}, {"/thread/tpi", 'n'}})},
		{"conversion", "POST", "/v1/tension-conversions", r, map[string]any{"calibration_id": cal, "spoke": sharedSpoke(), "readings": []any{300.0}},
			200, spokeMembers},
		{"audit", "POST", "/v1/tension-audits", r, map[string]any{"calibration_id": cal, "spoke": sharedSpoke(), "spoke_left": sharedSpoke(),
			"target_tension_n": 1000, "readings": []any{map[string]any{"side": "right", "spoke": 0, "reading": 300}, map[string]any{"side": "left", "spoke": 0, "reading": 280}}},
			200, append(spokeMembers, prefixed("/spoke_left", []sharedMember{{"/measured_section", 's'}, {"/sections/0/diameter_mm", 'n'}})...)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m := generic(t, c.body)
			for _, mb := range c.members {
				name := mb.ptr[strings.LastIndex(mb.ptr, "/")+1:]
				parent := mb.ptr[:strings.LastIndex(mb.ptr, "/")]
				variant := strings.ToUpper(name[:1]) + name[1:]
				refusedAt(t, e.do(c.method, c.path, c.key, string(render(m, "", mb.ptr, variant, ""))), parent+"/"+variant)
				refusedAt(t, e.do(c.method, c.path, c.key, string(render(m, "", "", "", mb.ptr))), mb.ptr)
				refusedAt(t, e.do(c.method, c.path, c.key, string(setAt(t, m, mb.ptr, "null"))), mb.ptr)
				wrong := map[byte]string{'s': "1", 'n': `"1"`, 'b': `"true"`}[mb.kind]
				refusedAt(t, e.do(c.method, c.path, c.key, string(setAt(t, m, mb.ptr, wrong))), mb.ptr)
				if mb.kind == 's' {
					refusedAt(t, e.do(c.method, c.path, c.key, string(setAt(t, m, mb.ptr, `"a\u0000"`))), mb.ptr)
				}
			}
			// Parts need a fresh SKU for the accepted body.
			if sku, ok := m["sku"].(string); ok {
				m["sku"] = sku + "-OK"
			}
			e.want(e.do(c.method, c.path, c.key, string(render(m, "", "", "", ""))), c.ok)
		})
	}
}

// TestBatchPathsAgreeOnOddWheels: a batch body in the plain shape (split by
// the fast scanner) and the same body with an escaped member name (decoded
// by the strict decoder) answer alike: a null wheel, a wheel of the wrong
// kind and a wheel with an unknown member are refused in their slots, not
// as the whole body, on both paths.
func TestBatchPathsAgreeOnOddWheels(t *testing.T) {
	e := newEnv(t)
	r := e.keyA[service.RoleRead]
	wheels := `[` + contractBody + `, null, 5, {"colour": 1}]`
	plain := e.want(e.do("POST", "/v1/spoke-lengths/batch", r, `{"wheels": `+wheels+`}`), 200)
	escaped := e.want(e.do("POST", "/v1/spoke-lengths/batch", r, `{"wh\u0065els": `+wheels+`}`), 200)
	type slot struct {
		Status int `json:"status"`
		Errors []struct {
			Pointer string `json:"pointer"`
		} `json:"errors"`
	}
	var a, b struct {
		Results   []slot `json:"results"`
		Succeeded int    `json:"succeeded"`
		Failed    int    `json:"failed"`
	}
	plain.json(t, &a)
	escaped.json(t, &b)
	if a.Succeeded != 1 || a.Failed != 3 || len(a.Results) != 4 {
		t.Fatalf("plain: %d succeeded, %d failed: %s", a.Succeeded, a.Failed, plain.body)
	}
	for i, want := range []string{"", "/wheels/1", "/wheels/2", "/wheels/3/colour"} {
		if i == 0 {
			continue
		}
		for name, res := range map[string]slot{"plain": a.Results[i], "escaped": b.Results[i]} {
			if res.Status != 400 || len(res.Errors) != 1 || res.Errors[0].Pointer != want {
				t.Errorf("%s slot %d: %+v, want a 400 at %s", name, i, res, want)
			}
		}
	}
	if !bytes.Equal(plain.body, escaped.body) {
		t.Errorf("the two paths answer differently:\n%s\n%s", plain.body, escaped.body)
	}
}
