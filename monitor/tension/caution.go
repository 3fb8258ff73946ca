package tension

// Caution is the safety text every output shows next to high margins (the scale sheet,
// the report, the demo). Keep one wording: restorers read it the same everywhere.
const Caution = "Strings under tension store a lot of energy; a breaking string can injure eyes and hands. " +
	"Wear eye protection when bringing strings up to pitch, raise pitch in stages, and follow the " +
	"instrument maker's specification and local professional practice. The margins are estimates from " +
	"the string data given to taut and depend on the strength figure used (its basis is named beside " +
	"them): a guide, never a guarantee, and no substitute for a qualified technician's judgement."

// CautionFloor is the margin (share of breaking load) above which the caution is shown
// whatever a config's warning threshold says: the trade's usual upper design limit of
// 70 % (reference-values §4.1, trade figure). A config may warn earlier, never later.
const CautionFloor = 0.70
