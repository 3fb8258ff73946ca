package sdnotify

import (
	"net"
	"os"
	"path/filepath"
	"strconv"
	"testing"
	"time"
)

// listen opens a fake notify socket like systemd's and returns a function that reads
// the next datagram.
func listen(t *testing.T) (string, func() string) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "notify.sock")
	conn, err := net.ListenUnixgram("unixgram", &net.UnixAddr{Name: path, Net: "unixgram"})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { conn.Close() })
	return path, func() string {
		buf := make([]byte, 4096)
		conn.SetReadDeadline(time.Now().Add(2 * time.Second))
		n, err := conn.Read(buf)
		if err != nil {
			t.Fatalf("read notify socket: %v", err)
		}
		return string(buf[:n])
	}
}

func TestNotifier_SendsStates(t *testing.T) {
	path, next := listen(t)
	n := NewAt(path)
	steps := []struct {
		name string
		send func() error
		want string
	}{
		{"Ready", n.Ready, "READY=1"},
		{"Watchdog", n.Watchdog, "WATCHDOG=1"},
		{"Status", func() error { return n.Status("36 strings: 30 steady\n2 alarm") }, "STATUS=36 strings: 30 steady 2 alarm"},
		{"Stopping", n.Stopping, "STOPPING=1"},
	}
	for _, s := range steps {
		t.Run(s.name, func(t *testing.T) {
			if err := s.send(); err != nil {
				t.Fatal(err)
			}
			if got := next(); got != s.want {
				t.Errorf("got %q, want %q", got, s.want)
			}
		})
	}
}

func TestNotifier_DisabledIsNoop(t *testing.T) {
	var nilN *Notifier
	for _, n := range []*Notifier{NewAt(""), nilN} {
		if n.Enabled() {
			t.Fatal("Enabled() = true without a socket")
		}
		if err := n.Ready(); err != nil {
			t.Fatalf("Ready() without a socket = %v, want nil", err)
		}
	}
}

func TestNotifier_MissingSocketIsAnError(t *testing.T) {
	n := NewAt(filepath.Join(t.TempDir(), "nobody-listens"))
	if err := n.Ready(); err == nil {
		t.Fatal("Ready() to a missing socket succeeded")
	}
}

func TestWatchdogInterval(t *testing.T) {
	pid := strconv.Itoa(os.Getpid())
	tests := []struct {
		name, usec, pid string
		want            time.Duration
	}{
		{"Off", "", "", 0},
		{"Half", "30000000", "", 15 * time.Second},
		{"OurPID", "10000000", pid, 5 * time.Second},
		{"OtherPID", "10000000", "1", 0},
		{"Garbage", "soon", "", 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Setenv("WATCHDOG_USEC", tc.usec)
			t.Setenv("WATCHDOG_PID", tc.pid)
			if got := WatchdogInterval(); got != tc.want {
				t.Errorf("WatchdogInterval() = %v, want %v", got, tc.want)
			}
		})
	}
}
