package records_test

import (
	"testing"

	"cornerbook/server/flags"
	"cornerbook/server/records"
)

// TestThresholdsAgreeWithFlagEngine pins the settings a coach can type
// (validated against records.Rules) to the parameters the flag engine
// reads: a name one side knows and the other does not would be a setting
// silently ignored, or a rule that cannot be tuned.
func TestThresholdsAgreeWithFlagEngine(t *testing.T) {
	engine := flags.DefaultThresholds()
	for rule, params := range engine {
		for name, v := range params {
			got, ok := records.Defaults[rule][name]
			if !ok {
				t.Errorf("flag engine reads %s.%s, which settings cannot set", rule, name)
			} else if got != v {
				t.Errorf("%s.%s: default %v here, %v in the flag engine", rule, name, got, v)
			}
		}
	}
	for rule, params := range records.Defaults {
		for name := range params {
			if _, ok := engine[rule][name]; !ok {
				t.Errorf("settings accept %s.%s, which the flag engine does not read", rule, name)
			}
		}
	}
}
