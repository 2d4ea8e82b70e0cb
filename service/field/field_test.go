package field

import (
	"errors"
	"fmt"
	"testing"

	"github.com/google/go-cmp/cmp"
)

func pointers(err error) []string {
	var out []string
	for _, fe := range All(err) {
		out = append(out, fe.Pointer)
	}
	return out
}

// TestAllFindsEveryFieldError: joined, wrapped and nested errors are all
// found, in order; other errors are passed over.
func TestAllFindsEveryFieldError(t *testing.T) {
	err := errors.Join(Invalid("/a", "x"), fmt.Errorf("context: %w", Unprocessable("/b", "y")),
		errors.New("plain"), errors.Join(Invalid("/c/0", "z"), nil))
	if diff := cmp.Diff([]string{"/a", "/b", "/c/0"}, pointers(err)); diff != "" {
		t.Errorf("pointers (-want +got):\n%s", diff)
	}
	if got := All(errors.New("plain")); got != nil {
		t.Errorf("All of a plain error = %v", got)
	}
	if got := All(nil); got != nil {
		t.Errorf("All(nil) = %v", got)
	}
}

// TestUnderAndMap: every pointer moves, the originals stay as they were,
// the kinds (400, 422) and messages are kept, other errors pass through.
func TestUnderAndMap(t *testing.T) {
	a, b := Invalid("/hub/left/pcd_mm", "must be positive"), Unprocessable("", "cannot be laced")
	plain := errors.New("plain")
	err := Under("/spec", errors.Join(a, b, plain))
	got := All(err)
	if len(got) != 2 || got[0].Pointer != "/spec/hub/left/pcd_mm" || got[1].Pointer != "/spec" ||
		got[0].Unprocessable || !got[1].Unprocessable || got[0].Message != "must be positive" {
		t.Fatalf("Under: %+v", got)
	}
	if a.Pointer != "/hub/left/pcd_mm" || b.Pointer != "" {
		t.Errorf("Under changed the originals: %q %q", a.Pointer, b.Pointer)
	}
	if !errors.Is(err, plain) {
		t.Error("Under lost the plain error")
	}
	if Under("/x", nil) != nil {
		t.Error("Under(nil) is not nil")
	}
	q := Map(Invalid("/spoke/width_mm", "too wide"), func(p string) string { return "query:" + p[len("/spoke/"):] })
	if fe := All(q); len(fe) != 1 || fe[0].Pointer != "query:width_mm" {
		t.Errorf("Map: %v", q)
	}
}

func TestErrorText(t *testing.T) {
	if s := Invalid("/a", "is %d", 3).Error(); s != "/a: is 3" {
		t.Errorf("%q", s)
	}
	if s := Invalid("", "the body is empty").Error(); s != "the body is empty" {
		t.Errorf("%q", s)
	}
}
