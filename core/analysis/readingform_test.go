package analysis

import (
	"strings"
	"testing"
)

func TestReadingForm(t *testing.T) {
	o, err := ReadingForm{Delimiter: "semicolon", Missing: "-1, -2", Scale: "0.01", DateOrder: "dmy"}.Options()
	if err != nil || o.Delimiter != ';' || len(o.Sentinels) != 2 || o.Sentinels[1] != -2 || o.Scale != 0.01 || o.DateOrder != "dmy" {
		t.Fatalf("%+v %v", o, err)
	}
	if o, err := (ReadingForm{Missing: "none"}).Options(); err != nil || o.Sentinels == nil || len(o.Sentinels) != 0 {
		t.Errorf("none: %+v %v", o, err)
	}
	if o, err := (ReadingForm{}).Options(); err != nil || o.Sentinels != nil || o.Delimiter != 0 {
		t.Errorf("defaults: %+v %v", o, err)
	}
	for _, f := range []ReadingForm{{Delimiter: "pipe"}, {Missing: "-9x"}, {Scale: "0"}, {Scale: "big"}, {DateOrder: "ymd"}} {
		if _, err := f.Options(); err == nil || !strings.Contains(err.Error(), "expected") && !strings.Contains(err.Error(), "not a number") {
			t.Errorf("%+v accepted: %v", f, err)
		}
	}
}
