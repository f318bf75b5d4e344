package circulation

import (
	"math"
	"strings"
	"testing"
)

// Settings that parse as numbers but make no physical sense are refused with a message naming
// the setting.
func TestExitConfigRefusesNonsense(t *testing.T) {
	good := ExitConfig{X: 0, Diameter: 0.02, Rho: 1000, Nu: 1e-6}
	if err := good.Validate(); err != nil {
		t.Fatalf("valid configuration refused: %v", err)
	}
	inf, nan := math.Inf(1), math.NaN()
	for _, c := range []struct {
		edit func(*ExitConfig)
		want string
	}{
		{func(c *ExitConfig) { c.Rho = -998 }, "density"},
		{func(c *ExitConfig) { c.Rho = inf }, "density"},
		{func(c *ExitConfig) { c.Rho = nan }, "density"},
		{func(c *ExitConfig) { c.Nu = inf }, "kinematic viscosity"},
		{func(c *ExitConfig) { c.LipOuter = nan }, "lip"},
		{func(c *ExitConfig) { c.Diameter = nan }, "diameter"},
		{func(c *ExitConfig) { c.X = inf }, "exit plane"},
	} {
		cfg := good
		c.edit(&cfg)
		if err := cfg.Validate(); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: err = %v, want it to name %q", cfg, err, c.want)
		}
	}
}
