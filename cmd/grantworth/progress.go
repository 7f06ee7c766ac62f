package main

import (
	"fmt"
	"io"
	"strings"
	"time"
)

// progressBar draws one line on a terminal: a label, a bar, a count and,
// once enough is done to judge, the time left, redrawn in place with a
// carriage return. It draws only when its writer is a terminal; otherwise
// every call does nothing.
type progressBar struct {
	w     io.Writer
	on    bool
	label string
	last  int       // last drawn permille, to redraw only on change
	start time.Time // of the first update, for the time left
}

func newProgress(ios *IO, label string) *progressBar {
	w := ios.progress
	if w == nil {
		w = ios.Err
	}
	return &progressBar{w: w, on: ios.ErrIsTerminal, label: label, last: -1}
}

const barWidth = 30

// update draws done of total.
func (p *progressBar) update(done, total int) {
	if !p.on || total <= 0 {
		return
	}
	pm := done * 1000 / total
	if pm == p.last {
		return
	}
	p.last = pm
	if p.start.IsZero() {
		p.start = time.Now()
	}
	fill := done * barWidth / total
	fmt.Fprintf(p.w, "\r%-24s [%s%s] %3d%% %d/%d%s", p.label, strings.Repeat("#", fill), strings.Repeat(".", barWidth-fill), pm/10, done, total,
		timeLeft(time.Since(p.start), done, total))
}

// finish ends the line.
func (p *progressBar) finish() {
	if p.on && p.last >= 0 {
		fmt.Fprintln(p.w)
	}
	p.last = -1
}

// timeLeft is ", about N s left" once a second has passed and a per cent
// is done, padded so that a shorter text overwrites a longer one.
func timeLeft(spent time.Duration, done, total int) string {
	if done <= 0 || done >= total || spent < time.Second || done*100 < total {
		return strings.Repeat(" ", timeLeftWidth)
	}
	left := time.Duration(float64(spent) * float64(total-done) / float64(done))
	return fmt.Sprintf("%-*s", timeLeftWidth, ", about "+roundLeft(left)+" left")
}

// timeLeftWidth holds ", about 999 min 59 s left".
const timeLeftWidth = 25

func roundLeft(d time.Duration) string {
	if d < time.Minute {
		return fmt.Sprintf("%d s", int(d.Seconds())+1)
	}
	return fmt.Sprintf("%d min %02d s", int(d.Minutes()), int(d.Seconds())%60)
}

// stages says on a terminal which stage of a long run is under way and,
// as each ends, what it did and how long it took:
//
//	reading     10,000 grants, 370,000 tranches                  0.8 s
//	valuing grants           [#############.................]  42% 4210/10000, about 12 s left
//
// Elsewhere it prints nothing. Each stage also labels the CPU profile.
type stages struct {
	w     io.Writer
	on    bool
	name  string
	start time.Time
	open  bool // a line begun and not ended
}

func newStages(ios *IO) *stages {
	w := ios.progress
	if w == nil {
		w = ios.Err
	}
	return &stages{w: w, on: ios.ErrIsTerminal}
}

// begin starts stage name (and labels the profile with it, see stage).
func (s *stages) begin(name string) {
	s.mark(name)
	if s.on {
		fmt.Fprintf(s.w, "%-11s ...", name)
		s.open = true
	}
}

// end closes the stage with what it did.
func (s *stages) end(format string, args ...any) {
	if !s.on {
		return
	}
	fmt.Fprintf(s.w, "\r%-11s %-48s %7.1f s\n", s.name, fmt.Sprintf(format, args...), time.Since(s.start).Seconds())
	s.open = false
}

// interrupt ends a line begun and not ended, so that an error or a
// warning printed next starts a line of its own.
func (s *stages) interrupt() {
	if s.open {
		fmt.Fprintln(s.w)
		s.open = false
	}
}

// mark starts stage name without a line of its own (its progress bars
// or its parts print theirs).
func (s *stages) mark(name string) {
	stage(name)
	s.name, s.start = name, time.Now()
}

// groupCount is n with grouped thousands.
func groupCount(n int) string { return strings.TrimSuffix(money2(float64(n)), ".00") }
