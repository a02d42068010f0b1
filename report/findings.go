package report

import (
	"io"

	"pairsmith/objectives"
)

// FindingsTable writes the always-on checks an evaluation fails
// (objectives.Assess: geometry rules, saturation with margin, level-1
// validity), one line per device and check, or that it passes them all.
func FindingsTable(w io.Writer, ev *objectives.Evaluation) error {
	e := &errWriter{w: w}
	if len(ev.Findings) == 0 {
		e.printf("checks: every device obeys the process rules, keeps its saturation margin (%s) where it must%s\n",
			SI(ev.Design.Margin(), "V", tableDigits), validityWords(ev))
		return e.err
	}
	e.printf("checks failed: not buildable as evaluated (%d finding(s))\n", len(ev.Findings))
	for _, f := range ev.Findings {
		e.printf("  %s\n", f.String())
	}
	return e.err
}

func validityWords(ev *objectives.Evaluation) string {
	if ev.Design.Process.Kind == "level1" {
		return " and is described by the square law wherever it carries its working current"
	}
	return ""
}
