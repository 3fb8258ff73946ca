// Package settle analyses how a new string settles: it takes one string's readings
// (hours, cents from target), splits them at pull-ups, fits a settling model to the
// latest stretch and predicts the drift rate, the time until the string is steady,
// the pitch a day ahead and the next pull-up. It is pure: no I/O, no logging, stdlib
// only.
//
// # Cleaning
//
// Points with a NaN or infinite time or pitch are dropped and counted. Times that are
// not in order (a caller that built hours from a wall clock which stepped back) are
// sorted by time, stably, and the analysis says so (Analysis.Reordered); callers should
// build hours from a monotonic clock where they have one.
//
// # Events: pull-ups, steps, outliers, gaps
//
// Each reading is compared with the run of readings since the last event.
//
//   - A spacing longer than the gap threshold (default max(1 h, 3 × median spacing))
//     is a gap. Across a gap only a rise is classified.
//   - A pull-up is a rise above the last reading by more than max(PullUpCents,
//     JumpSigma·σ_e) (defaults 2.5 cents and 5σ; a restorer retunes strings just past
//     a 3-cent tolerance, so small pull-ups are real). Settling only sags, so a rise
//     needs no trend. It opens a new segment.
//   - A step (a slip at a pin or bearing point) is a drop of more than max(StepCents,
//     JumpSigma·σ_e) both below the last reading and below the trend: the least-squares
//     line through the last (up to) four readings of the run, extrapolated. It needs
//     two readings of trend, so a drop straight after the start, a pull-up, a step or
//     a gap is left to the creep model; new strings fall fastest exactly there.
//   - A jump whose next reading returns to the run's trend (within half the threshold)
//     is an outlier: one bad reading, left out of the fits.
//
// σ_e is 1.4826·MAD (the MAD scaled to a Gaussian SD) of the one-step prediction
// errors of a first walk with the floor thresholds, counting only readings that
// follow at least three readings of trend and are not events: the curvature right
// after a start or a pull-up and the events themselves would otherwise inflate it.
// With fewer than five such errors σ_e is 0 and the floors apply; when JumpSigma·σ_e
// exceeds a floor the series is walked again with the raised thresholds.
//
// # Models
//
// The latest segment is fitted with times τ in hours since its first reading. Each
// step inside it adds a level shift d_k·H(τ − τ_k) with its own fitted d_k, so a slip
// is not mistaken for creep.
//
//	log creep     c(τ) = a − b·ln(1 + τ/t0)      rate −b/(t0 + τ)
//	exponential   c(τ) = c∞ + A·e^(−τ/T)         rate −(A/T)·e^(−τ/T)
//	line          c(τ) = c0 + s·τ                rate s
//
// Log-in-time creep is the usual viscoelastic approximation for polymer strings
// (reference-values §4.3 suggests it as an engineering model; no published
// cents-versus-hours curve for new strings exists). Both curves are linear in two
// coefficients once t0 or T is fixed, so they are fitted by variable projection: a
// 48-point log-spaced grid over t0 ∈ [span/2000, 50·span] or T ∈ [span/100, 20·span]
// followed by golden-section refinement of the least-squares residual.
//
// The model is chosen by the small-sample Akaike criterion
//
//	AICc = n·ln(RSS/n) + 2k + 2k(k+1)/(n − k − 1)
//
// with k the number of fitted parameters plus one for the noise variance. AICc (not
// BIC) because segments are short (10–30 readings) and the aim is prediction. With
// fewer than MinCurvePoints readings (default 6) the segment gets a Theil–Sen line
// (median of pairwise slopes), which one wild reading cannot drag; one reading gives a
// level only, with no rate.
//
// # Uncertainty
//
// Parameter covariance is s²·(JᵀJ)⁻¹ with s² = RSS/(n − p) and J the Jacobian of the
// model at the fit (∂/∂t0 and ∂/∂T by central differences). The standard errors of
// the present pitch, the rate and the prediction follow by the delta method. For the
// Theil–Sen line they are approximate: the least-squares formulas with s taken as
// 1.4826·MAD of the residuals.
//
// # Predictions
//
// RateNow is the model's slope at the last reading. HoursToSteady solves |rate| =
// SteadyCentsPerHour (default 1 cent/hour, an engineering default): for log creep
// τ* = |b|/r − t0, for the exponential τ* = T·ln(|A|/(T·r)); a line steeper than the
// threshold never becomes steady (+Inf). CentsAhead is the model at the last reading
// plus HorizonHours (default 24).
//
// # The next pull-up
//
// A raise R is assumed to fall back by a share s of R. To land on target from the
// present pitch c the string is raised by R = −c/(1 − s) and so tuned now to c + R
// (the overshoot) when it is flatter than the tolerance; a sharp string is lowered by
// its excess. s is the median of the string's own past shares (fall from the first to
// the last reading of each segment that began with a pull-up, steps excluded, divided
// by the rise), or, with no history, the trade figure: a raise falls back roughly
// 25–35 % on the treble bridge and about 10 % on the bass bridge (reference-values
// §4.3, a piano technician's page; common practice, not a measurement). The shares are
// clamped to [0, 0.9]. This is a heuristic for the restorer to weigh, not physics.
package settle
