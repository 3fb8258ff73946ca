// Package status serves the listener's live state over HTTP: a status page for
// phones and wall displays, a JSON snapshot, a server-sent event stream, Prometheus
// metrics and a health check. Every endpoint is read-only.
//
// A [Server] is a [monitor.Sink]. Publish folds each journal entry into an
// in-memory snapshot (every configured string in scale order, recent events) and
// queues one change message per live event stream. Publish never waits for a
// client: each stream has a bounded queue, and a client that lets it fill is
// dropped (its browser reconnects and starts again from a fresh snapshot).
//
// # Endpoints
//
//   - GET / — the status page (embedded assets, no network needed). Every string
//     along the scale with its state, cents from target, drift rate, tension and
//     margin; the strings that need attention first; a "data is stale" banner when
//     no reading arrived for Options.StaleAfter or the connection is lost; a
//     caution (tension.Caution) naming the strength basis when a margin reaches the
//     warn limit: the config's margin_warn, never above tension.CautionFloor (70 %).
//     /?display=wall selects the large-type dark layout for permanent displays.
//   - GET /api/strings — the [Snapshot] as JSON.
//   - GET /api/events — server-sent events: "snapshot" (a [Snapshot]) on connect,
//     then one "update" ([Update]) per published entry. The SSE id and the rev
//     field count updates: update n carries rev = snapshot rev + n, so a client
//     that sees a gap reconnects. A comment line every Options.Heartbeat keeps
//     proxies and idle timers from closing the stream.
//   - GET /metrics — Prometheus text from a private registry (names in metrics.go).
//   - GET /healthz — 200 while audio frames flow and the journal writes succeed,
//     else 503; the body is a one-line reason.
//
// # Health rules
//
// Audio is healthy while Stats.LastFrame is within Options.FrameTimeout of now: a
// live device delivers frames continuously even in a silent room, so old frames
// mean a stalled capture, a vanished device or a source that ended. The journal is
// healthy while Stats.JournalLastError is empty and Stats.JournalBacklog is zero:
// every accepted entry is in the file and no write or fsync is failing now. Errors
// counted earlier do not make it unhealthy once writes succeed again.
//
// # Staleness
//
// Ages and staleness use the server's clock at the moment an entry arrives, never
// the entry's own wall time, so a board whose clock jumps after boot, or a replay
// of an old night, still shows "stale" only when readings stop arriving.
//
// # Shutdown
//
// http.Server.Shutdown waits for handlers to return and an event stream never
// would, so [Server.ServeListener] registers [Server.StopStreams] with
// RegisterOnShutdown; each stream also sets a write deadline before every write
// so a stalled client cannot hold its handler, and a server-wide WriteTimeout
// does not cut healthy streams. [Server.Start] serves in the background and
// [Server.Wait] blocks until that shutdown has finished, so a daemon can wait for it
// before it closes its log and journal.
package status
