package records

import (
	"errors"
	"testing"

	devsync "cornerbook/sync"
)

// The bout's fight-week fields and the incident's medical fields: each bad
// value is refused with its field named.
func TestFightWeekFields(t *testing.T) {
	// pro lightweight: 135 lb; the day-before weigh-in is 2026-03-27 10:00+01:00.
	good := []string{
		bout(t, map[string]any{"bout_at": "2026-03-28T21:00:00+01:00",
			"rules":           map[string]any{"check_weights": []any{map[string]any{"days_before": 30, "over_limit_pct": 10}}, "fight_day": map[string]any{"over_limit_lb": 10}, "preset": "x"},
			"stand_down_sets": []any{"pro_board_28_45"}}),
		bout(t, map[string]any{"rules": map[string]any{"fight_day": map[string]any{"over_official_pct": 10}}}),
	}
	for i, b := range good {
		if err := Prepare(ptr(mk(KindBout, "ath-1", "", b))); err != nil {
			t.Errorf("good bout %d refused: %v", i, err)
		}
	}
	bad := []struct {
		name, kind, body, field string
	}{
		{"bout_at without offset", KindBout, bout(t, map[string]any{"bout_at": "2026-03-28 21:00"}), "body.bout_at"},
		{"bout_at on another day", KindBout, bout(t, map[string]any{"bout_at": "2026-03-29T21:00:00+01:00"}), "body.bout_at"},
		{"bout_at before the weigh-in", KindBout, bout(t, map[string]any{"weigh_in_type": "same_day", "weigh_in": "2026-03-28T10:00:00+01:00", "bout_at": "2026-03-28T09:00:00+01:00"}), "body.bout_at"},
		{"check weight 0 days out", KindBout, bout(t, map[string]any{"rules": map[string]any{"check_weights": []any{map[string]any{"days_before": 0, "over_limit_pct": 3}}}}), "body.rules.check_weights[0].days_before"},
		{"check weight twice the same day", KindBout, bout(t, map[string]any{"rules": map[string]any{"check_weights": []any{map[string]any{"days_before": 7, "over_limit_pct": 3}, map[string]any{"days_before": 7, "over_limit_pct": 4}}}}), "body.rules.check_weights[1].days_before"},
		{"40 % over the limit", KindBout, bout(t, map[string]any{"rules": map[string]any{"check_weights": []any{map[string]any{"days_before": 30, "over_limit_pct": 40}}}}), "body.rules.check_weights[0].over_limit_pct"},
		{"both fight-day caps", KindBout, bout(t, map[string]any{"rules": map[string]any{"fight_day": map[string]any{"over_limit_lb": 10, "over_official_pct": 10}}}), "body.rules.fight_day"},
		{"empty fight-day cap", KindBout, bout(t, map[string]any{"rules": map[string]any{"fight_day": map[string]any{}}}), "body.rules.fight_day"},
		{"fight-day 50 lb", KindBout, bout(t, map[string]any{"rules": map[string]any{"fight_day": map[string]any{"over_limit_lb": 50}}}), "body.rules.fight_day.over_limit_lb"},
		{"unknown stand-down set", KindBout, bout(t, map[string]any{"stand_down_sets": []any{"my_gym"}}), "body.stand_down_sets[0]"},
		{"loc seconds without loc", KindIncident, `{"type":"knockout","loc_seconds":20}`, "body.loss_of_consciousness"},
		{"knockout_loc with loc false", KindIncident, `{"type":"knockout_loc","loss_of_consciousness":false}`, "body.loss_of_consciousness"},
		{"loc for an injury", KindIncident, `{"type":"injury","loss_of_consciousness":true}`, "body.loss_of_consciousness"},
		{"loc for two hours", KindIncident, `{"type":"knockout","loss_of_consciousness":true,"loc_seconds":7200}`, "body.loc_seconds"},
		{"clinician's date without the clinician", KindIncident, `{"type":"knockout","clinician_day":"2026-04-20"}`, "body.seen_by"},
		{"clinician's date not a day", KindIncident, `{"type":"knockout","seen_by":"Dr. Invented","clinician_day":"20/04/2026"}`, "body.clinician_day"},
	}
	for _, tc := range bad {
		r := mk(tc.kind, "ath-1", "2026-03-02", tc.body)
		if tc.kind == KindBout {
			r.Day = ""
		}
		err := Prepare(&r)
		var fe *devsync.FieldError
		if !errors.As(err, &fe) || fe.Field != tc.field {
			t.Errorf("%s: %v, want a refusal naming %s", tc.name, err, tc.field)
		}
	}
	for _, body := range []string{
		`{"type":"knockout","loss_of_consciousness":true,"loc_seconds":25,"seen_by":"Dr. Invented","clinician_day":"2026-05-20"}`,
		`{"type":"knockout_loc","loc_seconds":10}`,
		`{"type":"head_knock"}`,
	} {
		if err := Prepare(ptr(mk(KindIncident, "ath-1", "2026-03-02", body))); err != nil {
			t.Errorf("good incident %s refused: %v", body, err)
		}
	}
}

func ptr(r devsync.Record) *devsync.Record { return &r }
