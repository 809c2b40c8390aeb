import Svg, { Circle, Rect } from 'react-native-svg';
import { colors } from '@/components/theme/tokens';

/** Decorative: a burn-in board seen from above, one socket glowing. */
export function SocketGrid({ width = 280 }: { width?: number }) {
  const cols = 8;
  const rows = 5;
  const cell = 32;
  const glow = new Set(['2-5']);
  return (
    <Svg
      width={width}
      height={(width * (rows * cell + 16)) / (cols * cell + 16)}
      viewBox={`0 0 ${cols * cell + 16} ${rows * cell + 16}`}
      aria-hidden
    >
      <Rect x={0} y={0} width={cols * cell + 16} height={rows * cell + 16} rx={14} fill="#35312C" />
      {Array.from({ length: rows }, (_, r) =>
        Array.from({ length: cols }, (_, c) => {
          const key = `${r}-${c}`;
          const hot = glow.has(key);
          return (
            <Rect
              key={key}
              x={8 + c * cell + 5}
              y={8 + r * cell + 5}
              width={cell - 10}
              height={cell - 10}
              rx={5}
              fill={hot ? colors.ember : '#2A2723'}
              stroke={hot ? '#F2A27E' : '#4A443D'}
              strokeWidth={1.2}
            />
          );
        }),
      )}
      <Circle cx={8 + 5 * cell + cell / 2} cy={8 + 2 * cell + cell / 2} r={3} fill="#FFE6D6" />
    </Svg>
  );
}
