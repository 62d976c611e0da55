package flags

// Cautions shown with flags where health is involved. They frame the flag
// as a prompt, defer to the medical team, the sanctioning body's rules and
// local law, and never suggest cutting weight faster.
const (
	CautionMass = "Weight numbers are a prompt to review the plan, never a reason to cut faster. " +
		"Any acute weight loss must be planned and supervised by a sports dietitian or physician " +
		"and follow the sanctioning body's rules and local law."
	CautionHydration = "Urine readings often misclassify hydration (Hew-Butler et al. 2018). " +
		"Check with the medical team before acting on this reading."
	CautionHead = "No sparring or contact until cleared in writing by a doctor. " +
		"Return to sport follows the medical team's graded steps (Patricios et al. 2023) and the sanctioning body's rules."
	CautionLoad = "The load ratio describes a change in training load; it does not predict injury " +
		"(Impellizzeri et al. 2020). Weigh it with how the athlete is responding."
	CautionMonotony = "Monotony describes how little the daily load varies; it is a prompt for the coach's " +
		"judgement, not a diagnosis."
)
