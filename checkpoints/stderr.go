package checkpoints

import "fmt"

// WithError formats a mean NLL in bits per site with prec decimals and its
// standard error to two significant digits, "0.48702 ± 0.0013". A zero
// error, which files from before the error was recorded hold, is left out
// rather than printed as an exact zero.
func WithError(mean, stderr float64, prec int) string {
	if stderr == 0 {
		return fmt.Sprintf("%.*f", prec, mean)
	}
	return fmt.Sprintf("%.*f ± %.2g", prec, mean, stderr)
}
