package server

import (
	"encoding/json"

	"cornerbook/server/fightweek"
	"cornerbook/server/medical"
	"cornerbook/server/records"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// related checks the rules between one fighter's records, inside the
// push (storage.Options.Related): weigh-ins in the order the trade takes
// them (fightweek.CheckWeighIn) and return-to-sport steps in order, each
// at least 24 h after the one before (medical.CheckStep, Patricios et al.
// 2023). A refusal names the field; nothing of the record is stored.
func related(rec *devsync.Record, v storage.View) error {
	switch rec.Kind {
	case records.KindWeighIn:
		return relatedWeighIn(rec, v)
	case records.KindRTSStep:
		return relatedStep(rec, v)
	}
	return nil
}

func relatedWeighIn(rec *devsync.Record, v storage.View) error {
	var b records.WeighIn
	if err := json.Unmarshal(rec.Body, &b); err != nil {
		return nil // Prepare has refused it already
	}
	var others []fightweek.WeighIn
	err := v.Records(rec.Athlete, records.KindWeighIn, func(r devsync.Record) error {
		var o records.WeighIn
		if r.ID != rec.ID && json.Unmarshal(r.Body, &o) == nil {
			others = append(others, fightweek.WeighIn{ID: r.ID, Type: o.Type, At: r.At, MassKg: o.MassKg})
		}
		return nil
	})
	if err != nil {
		return err
	}
	var bouts []fightweek.BoutTimes
	err = v.Records(rec.Athlete, records.KindBout, func(r devsync.Record) error {
		var o records.Bout
		if json.Unmarshal(r.Body, &o) == nil {
			bouts = append(bouts, fightweek.BoutTimes{ID: r.ID, BoutDay: o.BoutDay, BoutAt: o.BoutAt})
		}
		return nil
	})
	if err != nil {
		return err
	}
	if p := fightweek.CheckWeighIn(fightweek.WeighIn{ID: rec.ID, Type: b.Type, At: rec.At, MassKg: b.MassKg}, others, bouts); p != nil {
		return devsync.Invalid(p.Field, "%s", p.Reason)
	}
	return nil
}

func relatedStep(rec *devsync.Record, v storage.View) error {
	var b records.RTSStep
	if err := json.Unmarshal(rec.Body, &b); err != nil {
		return nil
	}
	var incAt string
	found := false
	err := v.Records(rec.Athlete, records.KindIncident, func(r devsync.Record) error {
		if r.ID == b.Incident {
			incAt, found = r.At, true
		}
		return nil
	})
	if err != nil {
		return err
	}
	if !found {
		return devsync.Invalid("body.incident", "no incident %q is recorded for this fighter; log the incident first", b.Incident)
	}
	var others []medical.LoggedStep
	err = v.Records(rec.Athlete, records.KindRTSStep, func(r devsync.Record) error {
		var o records.RTSStep
		if r.ID != rec.ID && json.Unmarshal(r.Body, &o) == nil && o.Incident == b.Incident {
			others = append(others, medical.LoggedStep{ID: r.ID, Step: o.Step, At: r.At})
		}
		return nil
	})
	if err != nil {
		return err
	}
	if p := medical.CheckStep(incAt, others, medical.LoggedStep{ID: rec.ID, Step: b.Step, At: rec.At}); p != nil {
		field := p.Field
		if field == "step" {
			field = "body.step"
		}
		return devsync.Invalid(field, "%s", p.Reason)
	}
	return nil
}
