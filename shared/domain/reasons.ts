/** Shortest written reason accepted for an act that needs one (Emberlot's rule, not a standard's). */

/** Booking a plan whose check has blocking findings (the reason is audited with the numbers). */
export const OVERRIDE_REASON_MIN = 10;
