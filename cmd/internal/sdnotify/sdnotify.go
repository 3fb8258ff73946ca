// Package sdnotify speaks systemd's notify protocol (sd_notify(3)): one datagram per
// state change to the unix socket named by $NOTIFY_SOCKET. When the variable is unset
// (not started by systemd, or Type= is not notify) every call is a no-op, so the
// daemon runs the same on a laptop.
//
// The states taut sends: READY=1 once the journal is recovered, the first audio frames
// arrived and the HTTP listener is bound; WATCHDOG=1 only while frames flow and journal
// writes succeed (so systemd restarts a daemon whose capture is stuck in C code);
// STATUS=<one line> for `systemctl status`; STOPPING=1 when shutdown begins.
package sdnotify

import (
	"fmt"
	"net"
	"os"
	"strconv"
	"strings"
	"time"
)

// Notifier sends notifications to systemd. The zero value and a nil *Notifier are
// no-ops.
type Notifier struct {
	addr *net.UnixAddr
}

// New returns a notifier for the socket in $NOTIFY_SOCKET ("" means disabled).
func New() *Notifier { return NewAt(os.Getenv("NOTIFY_SOCKET")) }

// NewAt returns a notifier for the given socket path. A leading '@' names a socket in
// the abstract namespace, as systemd does.
func NewAt(path string) *Notifier {
	if path == "" {
		return &Notifier{}
	}
	name := path
	if strings.HasPrefix(path, "@") {
		name = "\x00" + path[1:]
	}
	return &Notifier{addr: &net.UnixAddr{Name: name, Net: "unixgram"}}
}

// Enabled reports whether notifications go anywhere.
func (n *Notifier) Enabled() bool { return n != nil && n.addr != nil }

// Notify sends one or more newline-separated assignments, e.g. "READY=1".
func (n *Notifier) Notify(state string) error {
	if !n.Enabled() {
		return nil
	}
	conn, err := net.DialUnix("unixgram", nil, n.addr)
	if err != nil {
		return fmt.Errorf("sd_notify: dial %s: %w", n.addr.Name, err)
	}
	defer conn.Close()
	if _, err := conn.Write([]byte(state)); err != nil {
		return fmt.Errorf("sd_notify: send: %w", err)
	}
	return nil
}

// Ready tells systemd the daemon is up.
func (n *Notifier) Ready() error { return n.Notify("READY=1") }

// Watchdog feeds systemd's watchdog.
func (n *Notifier) Watchdog() error { return n.Notify("WATCHDOG=1") }

// Stopping tells systemd shutdown has begun.
func (n *Notifier) Stopping() error { return n.Notify("STOPPING=1") }

// Status sets the one-line status shown by `systemctl status`. Newlines are replaced.
func (n *Notifier) Status(line string) error {
	return n.Notify("STATUS=" + strings.ReplaceAll(line, "\n", " "))
}

// WatchdogInterval returns how often to feed the watchdog: half of $WATCHDOG_USEC, as
// sd_watchdog_enabled(3) advises, or 0 when the watchdog is off or meant for another
// process ($WATCHDOG_PID).
func WatchdogInterval() time.Duration {
	usec, err := strconv.ParseInt(os.Getenv("WATCHDOG_USEC"), 10, 64)
	if err != nil || usec <= 0 {
		return 0
	}
	if p := os.Getenv("WATCHDOG_PID"); p != "" && p != strconv.Itoa(os.Getpid()) {
		return 0
	}
	return time.Duration(usec) * time.Microsecond / 2
}
