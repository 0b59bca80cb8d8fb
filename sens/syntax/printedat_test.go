package syntax

import "testing"

// PrintedAt agrees with String: the printed text followed by the suffix is
// found at the start of a source that holds it, with its length, and any
// source that differs from it in one byte, or ends inside it, is refused.
func TestPrintedAt(t *testing.T) {
	for _, src := range []string{
		"a * (b + 2 [kg]) - max(c, d)",
		"if(x > 0, a / x, 0)",
		"sum(qty * price)",
		"-a ^ 2",
		"12.5 [$/h] * hours",
	} {
		x, err := ParseExpr(src)
		if err != nil {
			t.Fatal(err)
		}
		want := String(x)
		for _, suffix := range []string{"", " [kg]"} {
			text := want + suffix
			if n, ok := PrintedAt(x, suffix, []byte(text+"\nnext = 1")); !ok || n != len(text) {
				t.Errorf("%q%s: PrintedAt = %d, %v; want %d, true", src, suffix, n, ok, len(text))
			}
			if _, ok := PrintedAt(x, suffix, []byte(text[:len(text)-1])); ok {
				t.Errorf("%q%s: a source that ends one byte early matches", src, suffix)
			}
			for i := range len(text) {
				b := []byte(text)
				b[i] ^= 0x20
				if _, ok := PrintedAt(x, suffix, b); ok {
					t.Errorf("%q%s: a source changed at byte %d matches", src, suffix, i)
				}
			}
		}
	}
}
