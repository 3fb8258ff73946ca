package tension

// Material holds the constants of one string material in SI units.
type Material struct {
	Name        string
	DensityKgM3 float64 // ρ
	YoungPa     float64 // E
	// StrengthPa is the tensile strength used when StrengthTable is empty.
	StrengthPa float64
	// StrengthTable gives tensile strength against wire diameter (ascending
	// diameters); Strength interpolates it. Music wire strength falls with diameter.
	StrengthTable []StrengthPoint
	// Basis names where the strength figure comes from, e.g. "ASTM A228 minimum";
	// every margin shown to a user states it.
	Basis string
}

// StrengthPoint is one row of a strength-against-diameter table.
type StrengthPoint struct {
	DiameterM  float64
	StrengthPa float64
}

// Layer is a round wire of one material: the core, or one wrap layer.
type Layer struct {
	Material  *Material
	DiameterM float64
}

// String is the physical data of one speaking length of string.
type String struct {
	LengthM float64 // speaking length
	Core    Layer
	Wraps   []Layer // 0, 1 or 2 close-wound layers, innermost first
	// MeasuredMuKgM, when > 0, is a weighed mass per length that wins over geometry.
	MeasuredMuKgM float64
}
