/**
 * The navigation chrome (side rail, tab bar, "More" sheet and their icons) in one module loaded only
 * through LazyNav's dynamic import. Expo Router loads the shell's layout on every first visit, sign-in
 * included (it reads each layout's settings at start-up), so the chrome waits in a chunk of its own
 * until someone is signed in (tests/unit/web-budget.test.ts). route-prefetch-start.ts starts it early on
 * a signed-in page.
 */
export { MoreSheet } from './MoreSheet';
export { SideRail } from './SideRail';
export { TabBar } from './TabBar';
