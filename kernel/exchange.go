package kernel

import "github.com/nudge-dev/nudge/kernel/render"

var exchangeCommand = &Command{
	Verb:    "exchange",
	Doc:     "an exchange rate: one unit of a currency is worth an amount of another, so the two can mix",
	Example: "exchange EUR = 1.08 [$]",
	run:     runExchange,
}

// runExchange runs "exchange CODE = RATE [CURRENCY]": the model keeps the
// rate, and from then on amounts in the two currencies add up.
func runExchange(x *call) error {
	r, err := x.in.Model.DefineExchange(x.f, x.c)
	if err != nil {
		return err
	}
	x.show(render.Exchange(r, &x.in.Opts))
	return nil
}
