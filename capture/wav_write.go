package capture

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// maxWAVData is the largest data chunk a RIFF file can describe (its sizes are 32-bit).
const maxWAVData = 1<<32 - 1 - 36 - 24

// EncodeWAV writes samples (interleaved, f.Channels per frame) as a WAV file in the
// given encoding (one of the Enc constants). Integer encodings round to nearest and
// clip to [-1, 1). Integer files with more than two channels or samples wider than
// 16 bits get a WAVE_FORMAT_EXTENSIBLE header, as the format's specification asks;
// the others a plain PCM header. Float files always get the plain IEEE-float header
// with a "fact" chunk, which every reader we tried (sox among them) accepts without
// complaint.
func EncodeWAV(w io.Writer, f Format, encoding string, samples []float32) error {
	c := codecByName(encoding)
	if c == nil {
		return fmt.Errorf("capture: wav encoding %q; want one of %s", encoding, encodingNames())
	}
	if err := f.Validate(); err != nil {
		return err
	}
	if len(samples)%f.Channels != 0 {
		return fmt.Errorf("capture: encode wav: %d samples is not a whole number of %d-channel frames", len(samples), f.Channels)
	}
	dataBytes := int64(len(samples)) * int64(c.bytes)
	if dataBytes > maxWAVData {
		return fmt.Errorf("capture: encode wav: %d bytes of samples exceed the 4 GiB a RIFF file can hold", dataBytes)
	}
	bw := bufio.NewWriter(w)
	writeWAVHeader(bw, f, c, uint32(dataBytes))
	buf := make([]byte, 4096*c.bytes)
	for len(samples) > 0 {
		n := min(len(samples), 4096)
		c.encode(buf, samples[:n])
		bw.Write(buf[:n*c.bytes]) // errors are sticky in bufio and reported by Flush
		samples = samples[n:]
	}
	if dataBytes&1 == 1 {
		bw.WriteByte(0) // RIFF chunks are padded to an even size
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("capture: encode wav: %w", err)
	}
	return nil
}

// writeWAVHeader writes everything up to the samples. Non-PCM formats (float, and
// extensible) carry the extension-size field, and float files the "fact" chunk with
// the frame count, as the WAV specification asks of non-PCM data.
func writeWAVHeader(w io.Writer, f Format, c *codec, dataBytes uint32) {
	extensible := !c.float && (f.Channels > 2 || c.bytes > 2)
	fmtSize := uint32(16)
	switch {
	case extensible:
		fmtSize = 40
	case c.float:
		fmtSize = 18
	}
	factSize := uint32(0)
	if c.float {
		factSize = 12
	}
	le := binary.LittleEndian
	h := make([]byte, 0, 80)
	h = append(h, "RIFF"...)
	h = le.AppendUint32(h, 4+(8+fmtSize)+factSize+(8+dataBytes+dataBytes&1))
	h = append(h, "WAVEfmt "...)
	h = le.AppendUint32(h, fmtSize)
	tag := uint16(wavPCM)
	if c.float {
		tag = wavFloat
	}
	if extensible {
		h = le.AppendUint16(h, wavExtensible)
	} else {
		h = le.AppendUint16(h, tag)
	}
	block := uint32(f.Channels * c.bytes)
	h = le.AppendUint16(h, uint16(f.Channels))
	h = le.AppendUint32(h, uint32(f.SampleRate))
	h = le.AppendUint32(h, uint32(f.SampleRate)*block)
	h = le.AppendUint16(h, uint16(block))
	h = le.AppendUint16(h, uint16(c.bytes*8))
	switch {
	case extensible:
		h = le.AppendUint16(h, 22)                      // extension size
		h = le.AppendUint16(h, uint16(c.bytes*8))       // valid bits
		h = le.AppendUint32(h, channelMask(f.Channels)) // speaker positions
		h = le.AppendUint16(h, tag)
		h = append(h, subformatTail...)
	case c.float:
		h = le.AppendUint16(h, 0) // no extension
	}
	if c.float {
		h = append(h, "fact"...)
		h = le.AppendUint32(h, 4)
		h = le.AppendUint32(h, dataBytes/block)
	}
	h = append(h, "data"...)
	h = le.AppendUint32(h, dataBytes)
	w.Write(h)
}

// channelMask assigns the first n standard speaker positions (front left, front right,
// centre, ...), or none beyond the 18 the format defines.
func channelMask(n int) uint32 {
	if n > 18 {
		return 0
	}
	return 1<<n - 1
}

// WriteWAVFile writes samples to path as a WAV file (see EncodeWAV). It writes a
// temporary file in the same directory and renames it, so a crash never leaves a
// half-written file under the final name.
func WriteWAVFile(path string, f Format, encoding string, samples []float32) (err error) {
	tmp, err := os.CreateTemp(filepath.Dir(path), ".wav-*")
	if err != nil {
		return fmt.Errorf("capture: write %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err := EncodeWAV(tmp, f, encoding, samples); err != nil {
		return fmt.Errorf("capture: write %s: %w", path, err)
	}
	if err := tmp.Sync(); err != nil {
		return fmt.Errorf("capture: write %s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("capture: write %s: %w", path, err)
	}
	if err := os.Chmod(tmp.Name(), 0o644); err != nil {
		return fmt.Errorf("capture: write %s: %w", path, err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("capture: write %s: %w", path, err)
	}
	return nil
}
