//go:build !race

package jupyter

const raceEnabled = false
