package main

import (
	"context"
	"fmt"
	"os"
	"runtime/pprof"
	"runtime/trace"
	"time"

	"github.com/rs/zerolog"

	"taut/capture"
	"taut/configs"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
	"taut/monitor/report"
	"taut/monitor/sim"
)

func main() {
	name := "harp36.toml"
	if len(os.Args) > 1 {
		name = os.Args[1]
	}
	cfg, err := instrument.Parse(configs.FS, name)
	if err != nil {
		panic(err)
	}
	night, err := sim.NewNight(cfg, sim.Options{})
	if err != nil {
		panic(err)
	}
	for _, f := range night.Faults {
		fmt.Println(f.Describe())
	}
	fmt.Println("pulled", night.PulledUp)
	os.RemoveAll(os.Getenv("JD"))
	w, _, err := journal.Open(os.Getenv("JD"), journal.Options{})
	if err != nil {
		panic(err)
	}
	src := capture.NewSynthSource(capture.Format{SampleRate: 48000, Channels: 1})
	log := zerolog.New(zerolog.ConsoleWriter{Out: os.Stderr}).Level(zerolog.DebugLevel)
	m, err := monitor.New(monitor.Options{Config: night.Config, Source: sim.Noisy(src, 0.002, 1), Journal: w,
		Logger: log, StartTime: time.Date(2031, 3, 14, 19, 0, 0, 0, time.UTC), RunID: "demo"})
	if err != nil {
		panic(err)
	}
	pf, _ := os.Create("/tmp/cpu.prof")
	pprof.StartCPUProfile(pf)
	tf, _ := os.Create("/tmp/trace.out")
	trace.Start(tf)
	t0 := time.Now()
	go sim.Feed(context.Background(), night, src, m, 48)
	if err := m.Run(context.Background()); err != nil {
		fmt.Println("run:", err)
	}
	fmt.Printf("%+v in %v\n", m.Stats(), time.Since(t0))
	pprof.StopCPUProfile()
	trace.Stop()
	w.Close()
	entries, rep, err := journal.Load(os.Getenv("JD"))
	if err != nil {
		panic(err)
	}
	fmt.Println(rep)
	r := report.Build(entries, report.Options{Config: night.Config, JournalPath: os.Getenv("JD"), ReadSummary: rep.String(), ReadClean: rep.Clean()})
	if _, err := r.WriteDir("/tmp/td"); err != nil {
		panic(err)
	}
	r.WriteTable(os.Stdout)
}
