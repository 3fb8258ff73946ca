package report

import (
	"encoding/csv"
	"io"
	"strconv"
	"time"
)

var csvHeader = []string{"seq", "time", "hours", "run", "string", "f0_hz", "fundamental_hz", "cents",
	"inharmonicity", "tension_n", "margin", "rate_cents_per_hour", "clarity", "partials", "state", "reason"}

// WriteCSV writes readings.csv: one row per reading, in journal order.
func (r *Report) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(csvHeader); err != nil {
		return err
	}
	for _, rd := range r.Readings {
		e := rd.Entry
		row := []string{
			strconv.FormatUint(e.Seq, 10), e.Time.Format(time.RFC3339Nano), ff(rd.Hours, 5), e.Run, e.String,
			ff(e.F0Hz, 4), ff(e.FundamentalHz, 4), ff(e.Cents, 3), strconv.FormatFloat(e.Inharmonicity, 'g', 5, 64),
			ff(e.TensionN, 2), ff(e.Margin, 5), ff(e.RateCentsHour, 3), ff(e.Clarity, 3),
			strconv.Itoa(e.Partials), e.State.String(), e.Reason,
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

func ff(x float64, decimals int) string { return strconv.FormatFloat(x, 'f', decimals, 64) }
