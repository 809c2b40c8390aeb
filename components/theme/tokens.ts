/**
 * Design tokens for Emberlot. Warm paper background, graphite ink, one ember accent kept for
 * primary actions, and four status tones that are always paired with a label and a shape.
 */
import { Platform, type TextStyle } from 'react-native';

/** 8-pt grid; `xxs` is the only half step, for hairline gaps inside dense rows. */
export const space = {
  xxs: 4,
  xs: 8,
  sm: 12,
  md: 16,
  lg: 24,
  xl: 32,
  xxl: 48,
  xxxl: 64,
} as const;

export const radius = {
  sm: 6,
  md: 10,
  lg: 16,
  pill: 999,
} as const;

export const colors = {
  paper: '#F5F0E6',
  paperDeep: '#ECE4D6',
  surface: '#FFFDF8',
  surfaceSunken: '#F0E9DD',
  border: '#E0D6C4',
  borderStrong: '#C7B9A2',
  ink: '#24221F',
  inkMuted: '#57524A',
  inkSubtle: '#6F685D',
  inkInverse: '#FFFDF8',
  graphite: '#2E2B27',
  graphiteRaised: '#3A3631',
  ember: '#C2461A',
  emberPressed: '#A23A14',
  emberSoft: '#FBE4D7',
  focus: '#1F5FA8',
  scrim: 'rgba(36, 34, 31, 0.45)',
} as const;

export type Tone = 'ok' | 'attention' | 'danger' | 'idle' | 'info';

/** Status tones. `fg` passes 4.5:1 on `bg` and on paper; `edge` outlines pills and banners. */
export const tones: Record<Tone, { fg: string; bg: string; edge: string; label: string }> = {
  ok: { fg: '#1F6B3F', bg: '#E1F0E4', edge: '#8FC4A0', label: 'OK' },
  attention: { fg: '#7A4F00', bg: '#FCEFCB', edge: '#DDB24A', label: 'Attention' },
  danger: { fg: '#A3211B', bg: '#FADFDB', edge: '#E19A92', label: 'Danger' },
  idle: { fg: '#4F5660', bg: '#E7E8EA', edge: '#B5BAC1', label: 'Idle' },
  info: { fg: '#1E4F86', bg: '#E2ECF7', edge: '#98B6DA', label: 'Note' },
};

/** Lexend ships one file per weight; on web a family name per weight avoids faux bold. */
export const fonts = {
  regular: 'Lexend_400Regular',
  medium: 'Lexend_500Medium',
  semibold: 'Lexend_600SemiBold',
} as const;

const fallback = Platform.select({ web: ', system-ui, sans-serif', default: '' });
const family = (f: string) => f + fallback;

export type TypeVariant = 'display' | 'title' | 'heading' | 'body' | 'bodyStrong' | 'label' | 'caption' | 'overline';

export const type: Record<TypeVariant, TextStyle> = {
  display: { fontFamily: family(fonts.semibold), fontSize: 32, lineHeight: 40, letterSpacing: -0.4 },
  title: { fontFamily: family(fonts.semibold), fontSize: 24, lineHeight: 32, letterSpacing: -0.2 },
  heading: { fontFamily: family(fonts.semibold), fontSize: 18, lineHeight: 24 },
  body: { fontFamily: family(fonts.regular), fontSize: 16, lineHeight: 24 },
  bodyStrong: { fontFamily: family(fonts.medium), fontSize: 16, lineHeight: 24 },
  label: { fontFamily: family(fonts.medium), fontSize: 14, lineHeight: 20 },
  caption: { fontFamily: family(fonts.regular), fontSize: 13, lineHeight: 18 },
  overline: { fontFamily: family(fonts.medium), fontSize: 12, lineHeight: 16, letterSpacing: 0.8, textTransform: 'uppercase' },
};

/** Minimum touch target (WCAG 2.5.5 recommends 44 px; we round to the grid). */
export const touch = 44;

export const shadow = Platform.select({
  web: { boxShadow: '0 1px 2px rgba(36,34,31,0.06), 0 4px 16px rgba(36,34,31,0.05)' } as object,
  default: { shadowColor: '#24221F', shadowOpacity: 0.08, shadowRadius: 12, shadowOffset: { width: 0, height: 4 }, elevation: 2 },
});
