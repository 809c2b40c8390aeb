import { fmtHours } from '@/components/floor/rig-state';

// Regression: 95.6 h used to read "3 d 24 h" (the remainder was rounded after the division).
test.each([
  [0.5, '30 min'],
  [7.25, '7.3 h'],
  [30, '30 h'],
  [95.6, '4 d 0 h'],
  [100.4, '4 d 4 h'],
])('%p hours read as %p', (h, text) => {
  expect(fmtHours(h)).toBe(text);
});
