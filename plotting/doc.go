// Package plotting draws the charts of nudge from plain data: tornado and
// spider charts, 1-D sweeps, 2-D sweeps as heat maps with a target contour,
// histograms with their empirical CDF, index bars with intervals, and
// scatter plots of sampled inputs against an output, and waterfalls of a
// change told in parts.
//
// Each chart is a plain struct (Tornado, Spider, Sweep, HeatMap,
// Distribution, Indices, Scatter, Waterfall) that satisfies Chart: it writes SVG or
// PNG to an io.Writer, offers SVG, PNG and HTML methods that a Go notebook
// kernel displays inline, and draws itself as Unicode text for terminals.
// The marks of each chart are gonum/plot Plotters (TornadoBars,
// SpiderLines, SweepCurve, HeatGrid, ECDF and MarkerLines, IndexBars,
// ScatterPoints, WaterfallBars) that can also be added to a plot.Plot of one's own.
//
// Charts never draw NaN or infinite values: Validate reports them, naming
// the field, and the writers return that error. Numbers are written by
// nudge's one quantity formatter, unit.Format, as in the tables.
//
// The package imports gonum.org/v1/plot, the formatter's package
// (sens/unit, itself standard library only) and the standard library.
package plotting
