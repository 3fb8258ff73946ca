package main

import (
	"context"
	"fmt"
	"net"
	"runtime/debug"
	"strconv"

	"github.com/rs/zerolog"

	"taut/monitor/instrument"
	"taut/monitor/status"
)

// startStatus binds addr and serves the status page, JSON, events, metrics and
// health until ctx is done, then shuts down gracefully (status.ShutdownTimeout).
// Bind errors are returned at once; later serve errors are logged. After cancelling
// ctx, call Wait on the returned server before closing the log or the journal: it
// returns once the shutdown has finished and its last log line is written.
//
// Binding policy: the page is for this machine unless the address says otherwise.
// A bare port ("9440") binds 127.0.0.1. An address without a host (":9440") is
// refused because Go would bind every interface without anyone having said so;
// "0.0.0.0:9440", "[::]:9440" or a LAN address serve the network, explicitly,
// with a warning in the log. Every endpoint is read-only either way.
func startStatus(ctx context.Context, addr string, cfg *instrument.Config, stats func() status.Stats,
	log zerolog.Logger) (*status.Server, error) {
	bind, err := bindAddr(addr)
	if err != nil {
		return nil, err
	}
	ln, err := net.Listen("tcp", bind)
	if err != nil {
		return nil, fmt.Errorf("status page: listen on %s: %w (is another taut or service using the port?)", bind, err)
	}
	srv := status.New(cfg, status.Options{Stats: stats, Version: buildVersion()})
	err = srv.Start(ctx, ln, func(err error) {
		if err != nil {
			log.Error().Err(err).Msg("status page stopped")
			return
		}
		log.Info().Msg("status page stopped")
	})
	if err != nil { // a new server always starts; kept so that no listener leaks if not
		ln.Close()
		return nil, err
	}
	at := ln.Addr().String()
	log.Info().Str("addr", at).Str("url", "http://"+at+"/").Msg("status page, /metrics and /healthz serving")
	if !isLoopback(ln.Addr()) {
		log.Warn().Str("addr", at).Msg("status page serves the network: anyone who can reach this address can read it (every endpoint is read-only)")
	}
	return srv, nil
}

// bindAddr applies the binding policy (see startStatus).
func bindAddr(addr string) (string, error) {
	if _, err := strconv.ParseUint(addr, 10, 16); err == nil {
		return net.JoinHostPort("127.0.0.1", addr), nil
	}
	host, port, err := net.SplitHostPort(addr)
	if err != nil {
		return "", usagef("status page address %q: want HOST:PORT, e.g. 127.0.0.1:9440 (this machine only) "+
			"or 0.0.0.0:9440 (every interface)", addr)
	}
	if _, err := strconv.ParseUint(port, 10, 16); err != nil {
		return "", usagef("status page address %q: port %q is not a number from 0 to 65535", addr, port)
	}
	if host == "" {
		return "", usagef("status page address %q would serve every network interface without saying so: "+
			"write 127.0.0.1:%s for this machine only, or 0.0.0.0:%s to serve the network on purpose", addr, port, port)
	}
	return addr, nil
}

func isLoopback(a net.Addr) bool {
	tcp, ok := a.(*net.TCPAddr)
	return ok && tcp.IP.IsLoopback()
}

// buildVersion is the module version the binary was built from ("(devel)" for a
// plain go build in the work tree), with the VCS revision when known.
func buildVersion() string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return "unknown"
	}
	v := bi.Main.Version
	for _, s := range bi.Settings {
		if s.Key == "vcs.revision" && len(s.Value) >= 12 {
			v += "+" + s.Value[:12]
		}
	}
	return v
}
