package grants

import (
	"reflect"
	"testing"
)

func TestRoundTripSmall(t *testing.T) {
	s := smallSchedule()
	xlsx, dir := writeBoth(t, s)
	sx, rx, err := ReadFile(xlsx)
	if err != nil {
		t.Fatal(err)
	}
	sc, rc, err := ReadFile(dir)
	if err != nil {
		t.Fatal(err)
	}
	if !rx.OK() {
		t.Fatalf("xlsx problems:\n%s", problems(rx))
	}
	if !rc.OK() {
		t.Fatalf("csv problems:\n%s", problems(rc))
	}
	if !reflect.DeepEqual(sx, sc) {
		t.Errorf("xlsx and csv read differently:\nxlsx %+v\ncsv  %+v", sx, sc)
	}
	if len(sx.Grants) != len(s.Grants) {
		t.Fatalf("read %d grants, wrote %d", len(sx.Grants), len(s.Grants))
	}
	for i, g := range sx.Grants {
		w := s.Grants[i]
		g.Refs, g.Row = nil, 0
		if !reflect.DeepEqual(g, w) {
			t.Errorf("grant %d:\n got %+v\nwant %+v", i, g, w)
		}
	}
	t.Logf("warnings:\n%s", problems(rx))
}
