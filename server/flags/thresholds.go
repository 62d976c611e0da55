package flags

import "cornerbook/server/records"

// The rules' parameters and their defaults are the table in
// server/records (records.Rules, records.Defaults): settings records are
// validated against that same table, so every threshold a coach can type
// is one a rule here reads, and a test there pins the two together.

// DefaultThresholds returns every rule's parameters with the product's
// defaults, as a fresh map the caller may change.
func DefaultThresholds() map[string]map[string]float64 { return records.Resolve() }

// param returns the setting for rule.name: the override if present, else
// the default.
func (e *engine) param(rule, name string) float64 {
	if m, ok := e.in.Settings[rule]; ok {
		if v, ok := m[name]; ok {
			return v
		}
	}
	return records.Defaults[rule][name]
}

// atLeast returns the setting, never below the table's minimum: used for
// the medical stand-downs, which a coach may lengthen but not shorten.
func (e *engine) atLeast(rule, name string) float64 {
	v := e.param(rule, name)
	if p, ok := records.ParamOf(rule, name); ok && v < p.Min {
		return p.Min
	}
	return v
}
