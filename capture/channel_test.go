package capture

import (
	"fmt"
	"slices"
	"testing"
)

func TestChannel(t *testing.T) {
	in := []float32{1, 2, 3, 4, 5, 6} // three stereo frames, or two 3-channel frames
	for _, c := range []struct {
		name     string
		channels int
		pick     int
		want     []float32
	}{
		{"mono copies", 1, 0, []float32{1, 2, 3, 4, 5, 6}},
		{"mono pick 1", 1, 1, []float32{1, 2, 3, 4, 5, 6}},
		{"stereo mix", 2, 0, []float32{1.5, 3.5, 5.5}},
		{"stereo left", 2, 1, []float32{1, 3, 5}},
		{"stereo right", 2, 2, []float32{2, 4, 6}},
		{"three channels mix", 3, 0, []float32{2, 5}},
		{"three channels third", 3, 3, []float32{3, 6}},
	} {
		t.Run(c.name, func(t *testing.T) {
			if got := Channel(nil, in, c.channels, c.pick); !slices.Equal(got, c.want) {
				t.Errorf("Channel(%d, %d) = %v; want %v", c.channels, c.pick, got, c.want)
			}
		})
	}
}

func TestChannelReusesDst(t *testing.T) {
	in := make([]float32, 2*4096)
	dst := make([]float32, 0, 4096)
	allocs := testing.AllocsPerRun(10, func() { dst = Channel(dst, in, 2, 0) })
	if allocs != 0 || len(dst) != 4096 {
		t.Errorf("%v allocs, len %d; want 0 allocs into a big enough dst", allocs, len(dst))
	}
}

func TestChannelPanics(t *testing.T) {
	for _, c := range []struct{ channels, pick, n int }{{2, 3, 4}, {2, -1, 4}, {0, 0, 4}, {2, 0, 3}} {
		t.Run(fmt.Sprint(c), func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Error("no panic")
				}
			}()
			Channel(nil, make([]float32, c.n), c.channels, c.pick)
		})
	}
}
