package main

import (
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"sync"
	"time"

	"pairsmith/optimize"
)

// How often progress is shown: a bar on a terminal is redrawn four times
// a second; a log gets a line every five seconds.
const (
	barInterval  = 250 * time.Millisecond
	lineInterval = 5 * time.Second
	barWidth     = 16
	// barMax is the longest bar line: one that wraps on an 80-column
	// terminal could not be redrawn in place.
	barMax = 79
)

// eraseLine is the ANSI control sequence that erases from the cursor to
// the end of the line (ECMA-48 EL, CSI K).
const eraseLine = "\x1b[K"

// isTerminal reports whether w is a character device (a terminal), by the
// file mode alone, which needs nothing beyond the standard library.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	fi, err := f.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice != 0
}

// progress shows a running search on stderr: a bar redrawn in place when
// stderr is a terminal, plain lines now and then otherwise, so that the
// log of an overnight run stays readable. The search reports to update
// from its workers after every evaluation; update only stores the report,
// and a goroutine of its own draws it, so the search never waits on the
// terminal.
type progress struct {
	w        io.Writer
	terminal bool
	interval time.Duration
	deadline time.Time // the time budget's end; zero when none
	now      func() time.Time

	mu     sync.Mutex
	latest optimize.Progress
	shown  int // evaluations in the last line drawn
	// shownReported is the reported candidates re-evaluated in it.
	shownReported int

	stop chan struct{}
	wg   sync.WaitGroup
}

// newProgress makes a progress display on w; deadline is the end of the
// time budget (zero for none).
func newProgress(w io.Writer, deadline time.Time) *progress {
	p := &progress{w: w, terminal: isTerminal(w), interval: lineInterval, deadline: deadline, now: time.Now,
		stop: make(chan struct{})}
	if p.terminal {
		p.interval = barInterval
	}
	return p
}

// update records the state of the search. It is safe for concurrent use
// and takes constant time; reports arriving out of order are dropped.
func (p *progress) update(pr optimize.Progress) {
	p.mu.Lock()
	switch {
	case pr.Evaluations > p.latest.Evaluations:
		p.latest = pr
	case pr.Phase == optimize.PhaseReport && pr.Reported > p.latest.Reported:
		// After the search: the search's figures stay, the phase moves.
		p.latest.Phase, p.latest.Reported, p.latest.Reporting = pr.Phase, pr.Reported, pr.Reporting
	}
	p.mu.Unlock()
}

// phaseText names the phase of a report: "genetic", "report 12/217".
func phaseText(pr optimize.Progress) string {
	if pr.Phase == optimize.PhaseReport {
		return fmt.Sprintf("%s %d/%d", pr.Phase, pr.Reported, pr.Reporting)
	}
	return pr.Phase
}

// start begins drawing.
func (p *progress) start() {
	p.wg.Add(1)
	go func() {
		defer p.wg.Done()
		t := time.NewTicker(p.interval)
		defer t.Stop()
		for {
			select {
			case <-p.stop:
				return
			case <-t.C:
				p.draw(false)
			}
		}
	}()
}

// finish stops drawing and shows the final state, ending the bar's line.
func (p *progress) finish() {
	close(p.stop)
	p.wg.Wait()
	p.draw(true)
}

// draw shows the latest state: on a terminal it redraws the bar; in a
// log it writes a line when there is news, and always at the end.
func (p *progress) draw(final bool) {
	p.mu.Lock()
	defer p.mu.Unlock()
	pr := p.latest
	if !final && pr.Evaluations == p.shown && pr.Reported == p.shownReported {
		return
	}
	p.shown, p.shownReported = pr.Evaluations, pr.Reported
	now := p.now()
	if p.terminal {
		// Back to the line's start, the bar, then erase to the end of
		// the line (ANSI "EL"): whatever a shorter bar or the
		// terminal's own echo of ^C left there goes.
		end := ""
		if final {
			end = "\n"
		}
		fmt.Fprintf(p.w, "\r%s%s%s", barLine(pr, p.deadline, now), eraseLine, end)
		return
	}
	fmt.Fprintln(p.w, logLine(pr, p.deadline, now, final))
}

// openBudget reports whether a search has no evaluation budget to speak
// of (a time budget alone).
func openBudget(pr optimize.Progress) bool { return pr.Budget <= 0 || pr.Budget >= math.MaxInt32 }

// rate returns evaluations per second, 0 before any time has passed.
func rate(pr optimize.Progress) float64 {
	if s := pr.Elapsed.Seconds(); s > 0 {
		return float64(pr.Evaluations) / s
	}
	return 0
}

// eta estimates the time left: the rest of the evaluation budget at the
// rate so far, or the time budget's remainder if that ends first; ok is
// false when there is nothing to go on yet.
func eta(pr optimize.Progress, deadline, now time.Time) (time.Duration, bool) {
	left, ok := time.Duration(0), false
	if r := rate(pr); r > 0 && !openBudget(pr) {
		left, ok = time.Duration(float64(pr.Budget-pr.Evaluations)/r*float64(time.Second)), true
	}
	if !deadline.IsZero() {
		if d := max(deadline.Sub(now), 0); !ok || d < left {
			left, ok = d, true
		}
	}
	return max(left, 0), ok
}

// shortDuration writes a duration for a progress line: "42s", "3m05s",
// "2h07m".
func shortDuration(d time.Duration) string {
	s := int64(d.Round(time.Second) / time.Second)
	switch {
	case s < 60:
		return fmt.Sprintf("%ds", s)
	case s < 3600:
		return fmt.Sprintf("%dm%02ds", s/60, s%60)
	}
	return fmt.Sprintf("%dh%02dm", s/3600, (s%3600)/60)
}

// bestText says the best score so far, or the least violation before any
// candidate meets the spec.
func bestText(pr optimize.Progress) string {
	if pr.Feasible > 0 && !math.IsInf(pr.Best, 0) && !math.IsNaN(pr.Best) {
		return "best " + strconv.FormatFloat(pr.Best, 'f', 3, 64)
	}
	if !math.IsInf(pr.Nearest, 0) && !math.IsNaN(pr.Nearest) {
		return "least violation " + strconv.FormatFloat(pr.Nearest, 'f', 3, 64)
	}
	return "none feasible yet"
}

// countText writes "1234/20000", or "1234" without an evaluation budget.
func countText(pr optimize.Progress) string {
	if openBudget(pr) {
		return strconv.Itoa(pr.Evaluations)
	}
	return fmt.Sprintf("%d/%d", pr.Evaluations, pr.Budget)
}

// barLine is the in-place progress bar:
// "[######..........] 38% 7600/20000 412/s feasible 96 best 0.734 ETA 30s genetic",
// at most barMax runes: the phase is left out when it does not fit.
func barLine(pr optimize.Progress, deadline, now time.Time) string {
	frac := 0.0
	if !openBudget(pr) {
		frac = float64(pr.Evaluations) / float64(pr.Budget)
	}
	if !deadline.IsZero() && pr.Elapsed > 0 {
		// With a time budget, the larger of the two fractions done.
		total := pr.Elapsed + max(deadline.Sub(now), 0)
		frac = math.Max(frac, pr.Elapsed.Seconds()/total.Seconds())
	}
	frac = math.Min(math.Max(frac, 0), 1)
	n := int(math.Round(frac * barWidth))
	var b strings.Builder
	b.WriteString("[" + strings.Repeat("#", n) + strings.Repeat(".", barWidth-n) + "]")
	fmt.Fprintf(&b, " %.0f%% %s %.0f/s feasible %d %s", 100*frac, countText(pr), rate(pr), pr.Feasible, bestText(pr))
	if left, ok := eta(pr, deadline, now); ok && pr.Phase != optimize.PhaseReport {
		b.WriteString(" ETA " + shortDuration(left)) // after the search it has no meaning
	}
	line := []rune(b.String())
	if ph := phaseText(pr); ph != "" && len(line)+1+len([]rune(ph)) <= barMax {
		return string(line) + " " + ph
	}
	if len(line) > barMax {
		line = line[:barMax]
	}
	return string(line)
}

// logLine is a progress line for a log: "pairsmith run: 7600/20000
// evaluations, 412/s, 96 feasible, best 0.734, ETA 30s (genetic)"; the
// last one says "done".
func logLine(pr optimize.Progress, deadline, now time.Time, final bool) string {
	var b strings.Builder
	fmt.Fprintf(&b, "pairsmith run: %s evaluations, %.0f/s, %d feasible, %s", countText(pr), rate(pr), pr.Feasible, bestText(pr))
	if final {
		fmt.Fprintf(&b, ", done in %s", shortDuration(pr.Elapsed))
		return b.String()
	}
	if left, ok := eta(pr, deadline, now); ok {
		b.WriteString(", ETA " + shortDuration(left))
	}
	if ph := phaseText(pr); ph != "" {
		b.WriteString(" (" + ph + ")")
	}
	return b.String()
}
