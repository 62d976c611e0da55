// Ringside and jump-grid components, for the screens in ring.js.
export { useStanding } from './standing.js';
export { RoundClock } from './clock.js';
export { AthleteChips, useSparGate, RingsideRestrictions } from './rounds.js';
export { RingsideIncident } from './incident.js';
export { JumpRef } from './jumps.js';
