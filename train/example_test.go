package train_test

import (
	"fmt"
	"strings"

	"tidemark/data"
	"tidemark/train"
)

// ExampleParseHoldout selects grid points to keep out of training, by value
// and by range.
func ExampleParseHoldout() {
	ds, _ := data.New(12, 4, []string{"T"}, 2, nil, nil)
	for i := range ds.Params {
		ds.Params[i] = 2 + 0.1*float64(i/2) // T = 2.0, 2.1, …, 2.5, two samples each
	}
	g := data.NewGrid(ds)
	for _, spec := range []string{"T=2.2;2.4", "T=2.15:2.35"} {
		held, err := train.ParseHoldout(spec, g)
		if err != nil {
			fmt.Println(err)
			continue
		}
		var labels []string
		for _, k := range held {
			labels = append(labels, g.Label(k))
		}
		fmt.Println(strings.Join(labels, "  "))
	}
	_, err := train.ParseHoldout("T=2.25", g)
	fmt.Println(err)
	// Output:
	// T=2.2  T=2.4
	// T=2.2  T=2.3
	// holdout "T=2.25": T=2.25 is not a grid value; the dataset's values of T are 2, 2.1, 2.2, 2.3, 2.4, 2.5
}
