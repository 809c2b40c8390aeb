// The web export's stand-in for zod's locale index (metro.config.js): the app speaks English only,
// and zod's ~40 locales were a third of the JavaScript every screen downloads. English stays the
// default exactly as in zod (v4/classic/schemas.js registers it on first use).
export { default as en } from 'zod/v4/locales/en.js';
