package main

import (
	"fmt"
	"io"
	"os"
	"sync"
	"time"
)

// progressBar reports the progress of a long computation on stderr. It
// draws only when stderr is a terminal, and not at all for work that ends
// within a second, so logs and tests stay clean.
type progressBar struct {
	mu      sync.Mutex
	w       io.Writer
	label   string
	start   time.Time
	last    time.Time
	drawn   bool
	enabled bool
}

func newProgressBar(env *runEnv, label string) *progressBar {
	p := &progressBar{w: env.Stderr, label: label, start: time.Now()}
	if f, ok := env.Stderr.(interface{ Stat() (os.FileInfo, error) }); ok {
		if fi, err := f.Stat(); err == nil && fi.Mode()&os.ModeCharDevice != 0 {
			p.enabled = true
		}
	}
	return p
}

// Update records that done of total units are finished.
func (p *progressBar) Update(done, total int) {
	if p == nil || !p.enabled || total <= 0 {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	now := time.Now()
	if now.Sub(p.start) < time.Second || (now.Sub(p.last) < 200*time.Millisecond && done < total) {
		return
	}
	p.last = now
	const width = 30
	filled := width * done / total
	bar := make([]byte, width)
	for i := range bar {
		bar[i] = '.'
		if i < filled {
			bar[i] = '='
		}
	}
	elapsed := now.Sub(p.start)
	eta := ""
	if done > 0 && done < total {
		rest := time.Duration(float64(elapsed) * float64(total-done) / float64(done))
		eta = fmt.Sprintf(", about %s left", rest.Round(time.Second))
	}
	fmt.Fprintf(p.w, "\r%s [%s] %3d%%%s   ", p.label, bar, 100*done/total, eta)
	p.drawn = true
}

// Done clears the bar line.
func (p *progressBar) Done() {
	if p == nil || !p.drawn {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	fmt.Fprintf(p.w, "\r%*s\r", len(p.label)+70, "")
	p.drawn = false
}
