package main

import (
	"bytes"
	"testing"

	"grantworth/grants"
)

// The invented ledgers must pass the schedule's own validation, or
// bench/run.sh stops at its first size (a rule added to the schedule, such
// as a warrant's purpose, must be met here too). The realistic kind holds a
// few warrants per ten thousand grants; 6,000 grants include some, so the
// warrant rules are exercised.
func TestLedgersValidate(t *testing.T) {
	for _, c := range []struct {
		kind string
		s    *grants.Schedule
	}{
		{"realistic", realistic(6000)},
		{"adversarial", adversarial(300)},
	} {
		costCentres(c.s)
		warrants := 0
		for _, g := range c.s.Grants {
			if g.Instrument == grants.Warrant {
				warrants++
			}
		}
		if c.kind == "realistic" && warrants == 0 {
			t.Fatalf("%s: no warrant among %d grants", c.kind, len(c.s.Grants))
		}
		var buf bytes.Buffer
		if err := grants.WriteXLSX(&buf, c.s); err != nil {
			t.Fatal(err)
		}
		_, rep, err := grants.ReadXLSX(bytes.NewReader(buf.Bytes()), int64(buf.Len()))
		if err != nil {
			t.Fatalf("%s: %v", c.kind, err)
		}
		if !rep.OK() {
			t.Errorf("%s ledger (%d grants, %d warrants): %d errors, first %v", c.kind, len(c.s.Grants), warrants, rep.ErrorCount(), rep.Errors[0])
		}
	}
}
