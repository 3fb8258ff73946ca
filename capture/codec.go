package capture

import (
	"encoding/binary"
	"math"
)

// Sample encodings understood by the WAV reader and writer and by PCMSource. All are
// little-endian and interleaved. Integer samples map to [-1, 1) by dividing by 2^(bits-1)
// (8-bit WAV is unsigned with 128 as zero, as the WAV format defines it).
const (
	EncU8  = "u8"
	EncS16 = "s16le"
	EncS24 = "s24le"
	EncS32 = "s32le"
	EncF32 = "f32le"
	EncF64 = "f64le"
)

// codec converts between one encoding and float32 samples.
type codec struct {
	name  string
	bytes int // per sample
	float bool
	// decode converts len(dst) samples from src and returns the index of the first
	// sample that is not finite, or -1.
	decode func(dst []float32, src []byte) int
	// encode converts src into dst, clipping integer encodings to their range.
	encode func(dst []byte, src []float32)
}

var codecs = []*codec{
	{EncU8, 1, false, decodeU8, encodeU8},
	{EncS16, 2, false, decodeS16, encodeS16},
	{EncS24, 3, false, decodeS24, encodeS24},
	{EncS32, 4, false, decodeS32, encodeS32},
	{EncF32, 4, true, decodeF32, encodeF32},
	{EncF64, 8, true, decodeF64, encodeF64},
}

func codecByName(name string) *codec {
	for _, c := range codecs {
		if c.name == name {
			return c
		}
	}
	return nil
}

func codecFor(bits int, float bool) *codec {
	for _, c := range codecs {
		if c.bytes*8 == bits && c.float == float {
			return c
		}
	}
	return nil
}

func encodingNames() string {
	s := ""
	for i, c := range codecs {
		if i > 0 {
			s += ", "
		}
		s += c.name
	}
	return s
}

func decodeU8(dst []float32, src []byte) int {
	for i := range dst {
		dst[i] = float32(int(src[i])-128) / 128
	}
	return -1
}

func decodeS16(dst []float32, src []byte) int {
	for i := range dst {
		dst[i] = float32(int16(binary.LittleEndian.Uint16(src[2*i:]))) / (1 << 15)
	}
	return -1
}

func decodeS24(dst []float32, src []byte) int {
	for i := range dst {
		b := src[3*i : 3*i+3]
		v := int32(uint32(b[0])<<8|uint32(b[1])<<16|uint32(b[2])<<24) >> 8
		dst[i] = float32(v) / (1 << 23)
	}
	return -1
}

func decodeS32(dst []float32, src []byte) int {
	for i := range dst {
		dst[i] = float32(float64(int32(binary.LittleEndian.Uint32(src[4*i:]))) / (1 << 31))
	}
	return -1
}

func decodeF32(dst []float32, src []byte) int {
	bad := -1
	for i := range dst {
		v := math.Float32frombits(binary.LittleEndian.Uint32(src[4*i:]))
		if bad < 0 && (v != v || v > math.MaxFloat32 || v < -math.MaxFloat32) {
			bad = i
		}
		dst[i] = v
	}
	return bad
}

func decodeF64(dst []float32, src []byte) int {
	bad := -1
	for i := range dst {
		v := math.Float64frombits(binary.LittleEndian.Uint64(src[8*i:]))
		if bad < 0 && (math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > math.MaxFloat32) {
			bad = i
		}
		dst[i] = float32(v)
	}
	return bad
}

// quantize maps v in [-1, 1] to a signed integer of the given bits, rounding to nearest
// and clipping, so decode(encode(k/2^(bits-1))) == k/2^(bits-1) exactly.
func quantize(v float32, bits uint) int64 {
	full := float64(int64(1) << (bits - 1))
	x := math.Round(float64(v) * full)
	switch {
	case x != x:
		return 0
	case x > full-1:
		return int64(full - 1)
	case x < -full:
		return int64(-full)
	}
	return int64(x)
}

func encodeU8(dst []byte, src []float32) {
	for i, v := range src {
		dst[i] = byte(quantize(v, 8) + 128)
	}
}

func encodeS16(dst []byte, src []float32) {
	for i, v := range src {
		binary.LittleEndian.PutUint16(dst[2*i:], uint16(quantize(v, 16)))
	}
}

func encodeS24(dst []byte, src []float32) {
	for i, v := range src {
		q := uint32(quantize(v, 24))
		dst[3*i], dst[3*i+1], dst[3*i+2] = byte(q), byte(q>>8), byte(q>>16)
	}
}

func encodeS32(dst []byte, src []float32) {
	for i, v := range src {
		binary.LittleEndian.PutUint32(dst[4*i:], uint32(quantize(v, 32)))
	}
}

func encodeF32(dst []byte, src []float32) {
	for i, v := range src {
		binary.LittleEndian.PutUint32(dst[4*i:], math.Float32bits(v))
	}
}

func encodeF64(dst []byte, src []float32) {
	for i, v := range src {
		binary.LittleEndian.PutUint64(dst[8*i:], math.Float64bits(float64(v)))
	}
}
