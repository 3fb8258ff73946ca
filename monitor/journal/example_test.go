package journal_test

import (
	"fmt"
	"os"
	"time"

	"taut/monitor"
	"taut/monitor/journal"
)

func Example() {
	dir, err := os.MkdirTemp("", "journal-example-")
	if err != nil {
		panic(err)
	}
	defer os.RemoveAll(dir)

	w, rec, err := journal.Open(dir, journal.Options{})
	if err != nil {
		panic(err)
	}
	fmt.Println("recovered up to seq", rec.LastSeq)
	start := time.Date(2025, 11, 3, 22, 0, 0, 0, time.UTC)
	for i, cents := range []float64{-6.5, -4.25, -3.5} {
		e := monitor.Entry{
			Kind: monitor.KindReading, Time: start.Add(time.Duration(i) * 10 * time.Minute),
			MonoS: float64(i) * 600, Run: "demo", String: "C4", Cents: cents, State: monitor.Settling,
		}
		if err := w.Append(&e); err != nil {
			panic(err)
		}
	}
	if err := w.Close(); err != nil {
		panic(err)
	}

	entries, report, err := journal.Load(dir)
	if err != nil {
		panic(err)
	}
	for _, e := range entries {
		fmt.Println(e.Seq, e.Time.Format(time.TimeOnly), e.String, e.Cents, e.State)
	}
	fmt.Println(report.Clean())
	// Output:
	// recovered up to seq 0
	// 1 22:00:00 C4 -6.5 settling
	// 2 22:10:00 C4 -4.25 settling
	// 3 22:20:00 C4 -3.5 settling
	// true
}
