package monitor

import (
	"testing"
	"time"
)

func TestQuietHours(t *testing.T) {
	at := func(h, m int) time.Time { return time.Date(2031, 3, 14, h, m, 0, 0, time.Local) }
	tests := []struct {
		name, spec string
		t          time.Time
		want       bool
	}{
		{"None", "", at(3, 0), false},
		{"InsideSameDay", "12:00-14:30", at(13, 0), true},
		{"EndIsExclusive", "12:00-14:30", at(14, 30), false},
		{"PastMidnightLate", "22:00-06:30", at(23, 15), true},
		{"PastMidnightEarly", "22:00-06:30", at(5, 59), true},
		{"PastMidnightOutside", "22:00-06:30", at(7, 0), false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			q, err := parseQuietHours(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			if got := q.contains(tc.t); got != tc.want {
				t.Errorf("contains(%v) = %v, want %v", tc.t.Format("15:04"), got, tc.want)
			}
		})
	}
	for _, bad := range []string{"22-06", "25:00-06:00", "22:00-06:61", "evening"} {
		if _, err := parseQuietHours(bad); err == nil {
			t.Errorf("parseQuietHours(%q) accepted", bad)
		}
	}
}
