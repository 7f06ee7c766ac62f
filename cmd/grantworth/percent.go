package main

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"grantworth/grants"
)

// percentValue is a flag holding a rate or a volatility, given as a
// decimal (0.45) or a percentage (45%), as the schedule's percent columns
// are (grants.ParsePercent). It keeps the text given, for messages.
type percentValue struct {
	p    *float64
	text string
}

func (v *percentValue) Set(s string) error {
	x, err := grants.ParsePercent(s)
	if err != nil {
		return fmt.Errorf("not a decimal (0.45) or a percentage (45%%)")
	}
	*v.p, v.text = x, s
	return nil
}

func (v *percentValue) String() string {
	if v.text != "" {
		return v.text
	}
	if v.p == nil {
		return "0"
	}
	return strconv.FormatFloat(*v.p, 'g', -1, 64)
}

func (v *percentValue) Type() string { return "percent" }

// percentHint is grants.PercentHint for percent flag f, when its value
// was given as a number with no percent sign: "; did you mean 58% (0.58)?"
// for --vol 58.
func percentHint(f *pflag.Flag, in func(float64) bool) string {
	v, ok := f.Value.(*percentValue)
	if !ok || strings.HasSuffix(strings.TrimSpace(v.text), "%") {
		return ""
	}
	return grants.PercentHint(*v.p, in)
}
