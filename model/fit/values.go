package fit

import (
	"encoding/json"
	"fmt"
	"os"

	"github.com/mirabilis-astro/mirabilis/model"
)

// ReadValues reads parameter values by name from a file that is either a parameter file
// (a JSON object of values, see model.ParseParamValues) or a run's summary (SummaryJSON),
// whose posterior medians ("median_values") it then returns.
func ReadValues(path string) (map[string]float64, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("reading parameter values: %w", err)
	}
	var top map[string]json.RawMessage
	if json.Unmarshal(data, &top) == nil {
		if medians, ok := top["median_values"]; ok {
			v, err := model.ParseParamValues(medians)
			if err != nil {
				return nil, fmt.Errorf("reading the posterior medians of the summary %s: %w", path, err)
			}
			return v, nil
		}
	}
	v, err := model.ParseParamValues(data)
	if err != nil {
		return nil, fmt.Errorf("reading parameter values from %s: %w", path, err)
	}
	return v, nil
}
