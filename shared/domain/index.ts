/**
 * The domain's rules, each declared once with its source (STYLE.md "One rule, one place").
 * Hot paths import from the module itself (DEVELOPERS.md: swc's export-star getters).
 */
export * from './stress';
export * from './run-states';
export * from './standards';
export * from './permissions';
export * from './format';
export * from './records';
