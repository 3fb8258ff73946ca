package settle_test

import (
	"fmt"
	"math"

	"taut/monitor/settle"
)

// A nylon string strung at 0 h sags by log creep (b = 4 cents, t0 = 0.5 h), read
// every half hour for 8 hours.
func Example() {
	var pts []settle.Point
	for i := 0; i <= 16; i++ {
		h := float64(i) / 2
		pts = append(pts, settle.Point{Hours: h, Cents: 1 - 4*math.Log1p(h/0.5)})
	}
	an, err := settle.Analyze(pts, settle.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("model %s, b = %.2f cents, t0 = %.2f h\n", an.Fit.Model, an.Fit.Params[1], an.Fit.Params[2])
	fmt.Printf("now %.1f cents, rate %.2f cents/hour, steady: %v\n", an.CentsNow, an.RateNow, an.Steady)
	fmt.Printf("+24 h: %.1f cents; raise %.1f cents (tune to %+.1f), share %.0f %%\n",
		an.CentsAhead, an.Suggest.RaiseCents, an.Suggest.AimCents, 100*an.Suggest.Share)
	// Output:
	// model log-creep, b = 4.00 cents, t0 = 0.50 h
	// now -10.3 cents, rate -0.47 cents/hour, steady: true
	// +24 h: -15.7 cents; raise 14.8 cents (tune to +4.4), share 30 %
}

// Median is the robust centre used throughout the analysis (and by the report);
// it leaves its input alone.
func ExampleMedian() {
	x := []float64{3, -1, 7, 2}
	fmt.Println(settle.Median(x), settle.Median(x[:3]), math.IsNaN(settle.Median(nil)), x)
	// Output:
	// 2.5 3 true [3 -1 7 2]
}
