package analysis

import (
	"slices"
	"testing"
)

// TestRolesSteerDefaults: series given roles are what the views start
// from, ahead of the guesses from names and units.
func TestRolesSteerDefaults(t *testing.T) {
	f, _ := readDemo(t)
	w, err := f.Workspace()
	if err != nil {
		t.Fatal(err)
	}
	// without roles: the guesses
	if got := w.DefaultTemperature(); got != "tessary_surface.csv:surface_anomaly" {
		t.Fatalf("default temperature %q", got)
	}
	w.Roles = map[string]string{
		"second_record":                   RoleTarget, // by NAME
		"tessary_forcing.csv:co2":         RoleForcing,
		"tessary_forcing.csv:aerosol_erf": RoleForcing,
		"ocean_index":                     RoleDriver,
		"tessary_forcing.csv:tsi":         RoleDriver,
	}
	if got := w.DefaultTemperature(); got != "tessary_surface.csv:second_record" {
		t.Errorf("default temperature %q, want the target second_record", got)
	}
	d := w.ResponseDefaults()
	var comps []string
	for _, c := range d.Components {
		comps = append(comps, c.Series+"/"+c.Kind)
	}
	if !slices.Equal(comps, []string{"tessary_forcing.csv:aerosol_erf/erf", "tessary_forcing.csv:co2/co2"}) && !slices.Equal(comps, []string{"tessary_forcing.csv:co2/co2", "tessary_forcing.csv:aerosol_erf/erf"}) {
		t.Errorf("forcing components %v, want the two given the forcing role", comps)
	}
	if d.Record != "tessary_surface.csv:second_record" {
		t.Errorf("record %q", d.Record)
	}
	if !slices.Equal(d.Drivers, []string{"tessary_surface.csv:ocean_index", "tessary_forcing.csv:tsi"}) && !slices.Equal(d.Drivers, []string{"tessary_forcing.csv:tsi", "tessary_surface.csv:ocean_index"}) {
		t.Errorf("drivers %v", d.Drivers)
	}
	fs, ok := w.GuessForcing()
	if !ok || len(fs.Components) != 2 {
		t.Errorf("GuessForcing with roles: %v %v", fs, ok)
	}
	// a role on a series whose unit cannot serve is passed over
	w.Roles["tessary_forcing.csv:n2o"] = RoleHeat
	if got := w.DefaultHeatSettings().Series; got != "tessary_ocean_heat.csv:ocean_heat" {
		t.Errorf("heat series %q, want ocean_heat (n2o in ppb is no heat content)", got)
	}
	w.Roles["tessary_forcing.csv:ch4"] = RoleForcing // a concentration: its kind is guessed, never "erf"
	w.Roles["tessary_surface.csv:ocean_index"] = RoleForcing
	fs, _ = w.GuessForcing()
	for _, c := range fs.Components {
		if c.Series == "tessary_forcing.csv:ch4" && c.Kind != "ch4" {
			t.Errorf("ch4 given the forcing role is taken as %q", c.Kind)
		}
		if c.Series == "tessary_surface.csv:ocean_index" {
			t.Errorf("ocean_index (K) given the forcing role became a component %+v", c)
		}
	}
}
