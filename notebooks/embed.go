// Package notebooks holds the demo and tour notebooks, with the files they
// read, built into the nudge binary so that `nudge demo` runs them from
// anywhere.
package notebooks

import "embed"

// FS holds the notebooks (*.ipynb), the model file (*.nudge) and the data
// files (*.csv) of this directory.
//
//go:embed *.ipynb *.nudge *.csv
var FS embed.FS
