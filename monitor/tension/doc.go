// Package tension computes the physics of one string from its data: mass per
// length, tension at a pitch, breaking load, margin, predicted inharmonicity, and
// the gauge implied by a measured inharmonicity. It imports only the standard
// library and knows nothing of audio. Everything is SI inside (m, kg, N, Pa, Hz);
// MM, Inches and ForceUnit convert at the edges.
//
// # Ideal string
//
// Taylor / Mersenne (reference-values §1.1; Fletcher & Rossing 1998 ch. 2):
//
//	f_n = n/(2L)·√(T/μ)      so      T = 4·L²·μ·f0²
//
// # Mass per length
//
// Plain round wire μ = ρ·π·d²/4. A close-wound layer of round wire of diameter w on
// an inner diameter c adds ρw·π²·w·(c + w)/4: its centre-line helix has diameter
// c + w and there is one turn per w of length (the pitch term is neglected). A
// second layer sits on c + 2·w1. This is the geometry of reference-values §2.3 (the
// same form as in scale-design texts such as Conklin 1996, from memory). Real
// winding is pressed and slightly flattened, so a weighed mass per length, when
// given, wins over geometry.
//
// # Breaking load and margin
//
// Breaking load = tensile strength at the core diameter × core area; the wraps are
// taken to carry no load. Margin = tension / breaking load. Music-wire strength falls
// with diameter; the built-in table is the ASTM A228 minimum as reproduced in
// reference-values §3.1, interpolated linearly. The margin depends on the strength
// basis (minimum, measured average, an old formula shift it by about ten points,
// reference-values §4.1), so every Material carries a Basis to show beside it.
//
// For a plain string the stress at a pitch is σ = 4·ρ·L²·f², independent of the
// diameter, so the breaking pitch obeys f·L = ½·√(σ/ρ): 268.6 Hz·m for music wire at
// 2265 MPa. Since T ∝ f², a pitch change from margin p to margin q is 6·log2(q/p)
// semitones; the distance to the breaking pitch is −6·log2(p) (50 % → 6.00 semitones).
//
// # Inharmonicity
//
// Fletcher 1964 (from memory, widely reproduced): f_n = n·f0·√(1 + B·n²) with
//
//	B = π³·E·d⁴ / (64·T·L²)
//
// and hinged ends. The first partial is f0·√(1+B); tension must use f0. For wound
// strings only the core's stiffness is counted, which makes B a lower bound
// (reference-values §2.3).
//
// # Target pitch
//
// One rule for the whole project: a target pitch (a config's note or target_hz) is
// the pitch of the first partial, the pitch a tuner hears and shows. Tension, margin,
// B and the breaking comparison always use the ideal-string f0 = f1/√(1+B), never f1.
// Reading a tuned string's f1 as f0 overstates its tension by the factor 1+B and
// makes it seem flat of its target by 600·log2(1+B) cents: about 14 cents at a piano's
// top C (reference-values §1.2 E6, B = 0.0162 from §2.2).
//
// B depends on the tension, so f0 is the root of f1 = f0·√(1+B(T(f0))). Putting
// T = 4·L²·μ·f0² into Fletcher's B shows that B·f0² is the same at every tension,
//
//	K = B·f0² = π³·E·d⁴ / (256·L⁴·μ)
//
// so f1² = f0² + K and f0 = √(f1² − K) exactly (String.F0ForFirstPartial). √K is the
// pitch of the bare core ringing as a hinged bar at zero tension; no first partial at
// or below it can be reached by tuning. For a wound string B from the core alone is a
// lower bound, so its f0 comes out a little high and its tension errs on the safe side.
//
// # Gauge from a measured B
//
// Putting T = π·ρ·d²·L²·f0² into B gives B = π²·(E/ρ)·d²/(64·L⁴·f0²) for plain wire,
// so a measured B and f0 give the diameter, and with it a tension that does not
// depend on the nominal gauge: a string strung with the wrong gauge shows up. See
// GaugeFromB for the uncertainty.
//
// # Materials
//
// Builtin returns fresh copies of music_wire, stainless, phosphor_bronze, brass,
// copper, nylon, gut and fluorocarbon. The metal figures are from the sources in
// reference-values §3.2; the polymer and gut figures are from memory and of low
// confidence, and their Basis says so.
package tension
