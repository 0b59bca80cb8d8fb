package sens

// swingShares sets each bar's share of the sum of squared swings,
//
//	share_i = swing_i² / Σ_j swing_j²
//
// an approximate share of the output's variance when every range spans
// comparable percentiles of its input and the inputs are independent and act
// nearly linearly (common practice in decision analysis, where a tornado's
// squared swings are read as a first-order variance breakdown). Shares sum
// to 1 over all bars; all are 0 when no swing is.
func swingShares(bars []TornadoBar) {
	sum := 0.0
	for _, b := range bars {
		sum += b.Swing * b.Swing
	}
	for i := range bars {
		bars[i].SwingShare = 0
		if sum > 0 {
			bars[i].SwingShare = bars[i].Swing * bars[i].Swing / sum
		}
	}
}
