import Svg, { Circle, Path, Rect } from 'react-native-svg';
import { tones, type Tone } from '@/components/theme/tokens';

/**
 * A shape per tone, so status never rests on colour alone:
 * ok = disc with a tick, attention = triangle with "!", danger = octagon with "×",
 * idle = hollow ring with a dash, info = disc with "i".
 */
export function StatusShape({ tone, size = 16, color }: { tone: Tone; size?: number; color?: string }) {
  const c = color ?? tones[tone].fg;
  const paper = '#FFFDF8';
  return (
    <Svg
      width={size}
      height={size}
      viewBox="0 0 16 16"
      accessibilityElementsHidden
      importantForAccessibility="no-hide-descendants"
      aria-hidden
    >
      {tone === 'ok' ? (
        <>
          <Circle cx={8} cy={8} r={7.5} fill={c} />
          <Path d="M4.6 8.3l2.2 2.2 4.6-4.8" stroke={paper} strokeWidth={1.8} fill="none" strokeLinecap="round" strokeLinejoin="round" />
        </>
      ) : tone === 'attention' ? (
        <>
          <Path d="M8 1.2l7.1 12.6a.8.8 0 0 1-.7 1.2H1.6a.8.8 0 0 1-.7-1.2z" fill={c} />
          <Rect x={7.1} y={5.2} width={1.8} height={5} rx={0.9} fill={paper} />
          <Circle cx={8} cy={12.3} r={1} fill={paper} />
        </>
      ) : tone === 'danger' ? (
        <>
          <Path d="M5.2.6h5.6l4.6 4.6v5.6l-4.6 4.6H5.2L.6 10.8V5.2z" fill={c} />
          <Path d="M5.5 5.5l5 5M10.5 5.5l-5 5" stroke={paper} strokeWidth={1.8} strokeLinecap="round" />
        </>
      ) : tone === 'idle' ? (
        <>
          <Circle cx={8} cy={8} r={6.6} stroke={c} strokeWidth={1.8} fill="none" />
          <Path d="M5.2 8h5.6" stroke={c} strokeWidth={1.8} strokeLinecap="round" />
        </>
      ) : (
        <>
          <Circle cx={8} cy={8} r={7.5} fill={c} />
          <Rect x={7.1} y={6.8} width={1.8} height={5} rx={0.9} fill={paper} />
          <Circle cx={8} cy={4.5} r={1.05} fill={paper} />
        </>
      )}
    </Svg>
  );
}
