package fit

// TruncationEstimate exposes parameterTruncation to the external tests
// (the calibration against exact references).
func TruncationEstimate(thetas [][]float64) []float64 {
	est, _ := parameterTruncation(thetas)
	return est
}
