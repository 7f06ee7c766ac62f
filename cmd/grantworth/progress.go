package main

import (
	"fmt"
	"io"
	"strings"
)

// progressBar draws one line on a terminal: a label, a bar and a count,
// redrawn in place with a carriage return. It draws only when its writer
// is a terminal; otherwise every call does nothing.
type progressBar struct {
	w     io.Writer
	on    bool
	label string
	last  int // last drawn permille, to redraw only on change
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
	fill := done * barWidth / total
	fmt.Fprintf(p.w, "\r%-24s [%s%s] %3d%% %d/%d", p.label, strings.Repeat("#", fill), strings.Repeat(".", barWidth-fill), pm/10, done, total)
}

// finish ends the line.
func (p *progressBar) finish() {
	if p.on && p.last >= 0 {
		fmt.Fprintln(p.w)
	}
	p.last = -1
}
