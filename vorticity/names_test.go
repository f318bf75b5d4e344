package vorticity

import "testing"

// TestNames checks that every scheme and quantity name reads back to itself and that unknown
// names are refused.
func TestNames(t *testing.T) {
	for _, s := range Schemes {
		if got, err := ParseScheme(s.String()); err != nil || got != s {
			t.Errorf("scheme %v reads back as %v (%v)", s, got, err)
		}
	}
	if _, err := ParseScheme("upwind"); err == nil {
		t.Error("unknown scheme accepted")
	}
	for _, q := range Quantities() {
		if got, err := ParseQuantity(q.String()); err != nil || got != q {
			t.Errorf("quantity %v reads back as %v (%v)", q, got, err)
		}
		if q.Unit() == "" {
			t.Errorf("quantity %v has no unit", q)
		}
	}
	if _, err := ParseQuantity("helicity"); err == nil {
		t.Error("unknown quantity accepted")
	}
	st := MakeStencil(StencilFull, StencilOneSided)
	if st.X() != StencilFull || st.Y() != StencilOneSided || st.Worst() != StencilOneSided || st.String() != "full/one-sided" {
		t.Errorf("stencil packing: %v %v %v %q", st.X(), st.Y(), st.Worst(), st.String())
	}
}
