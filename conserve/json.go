package conserve

import (
	"encoding/json"
	"fmt"
	"io"
)

// WriteJSON writes the report as one indented JSON object followed by a newline, in the
// schema documented in the package documentation. It returns an error (and writes
// nothing) if a value cannot be encoded, e.g. a NaN that escaped the checks.
func WriteJSON(out io.Writer, r *Report) error {
	b, err := json.MarshalIndent(r, "", "  ")
	if err != nil {
		return fmt.Errorf("audit report: %w", err)
	}
	b = append(b, '\n')
	_, err = out.Write(b)
	return err
}
