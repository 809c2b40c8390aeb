/** Shortest written reason accepted for an act that needs one (Emberlot's rule, not a standard's). */

/** Asking to book a plan whose check has blocking findings (the reason is audited with the numbers). */
export const OVERRIDE_REASON_MIN = 10;
/** Refusing someone's override request (an approval needs no note). */
export const OVERRIDE_REFUSAL_NOTE_MIN = 10;
