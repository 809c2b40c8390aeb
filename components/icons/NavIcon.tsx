import Svg, { Circle, Path, Rect } from 'react-native-svg';

/** Our own 24 px stroke icons for navigation (icon fonts render as empty boxes in headless browsers). */
export type NavIconName =
  | 'floor'
  | 'alarms'
  | 'readings'
  | 'plans'
  | 'devices'
  | 'schedule'
  | 'trends'
  | 'people'
  | 'mail'
  | 'rigs'
  | 'approvals'
  | 'audit'
  | 'capacity'
  | 'qualifications'
  | 'more'
  | 'account'
  | 'signout';

interface Props {
  name: NavIconName;
  color: string;
  size?: number;
  /** The accent for one detail (the active tab's ember dot). */
  accent?: string;
}

export function NavIcon({ name, color, size = 24, accent }: Props) {
  const s = { stroke: color, strokeWidth: 1.8, fill: 'none', strokeLinecap: 'round' as const, strokeLinejoin: 'round' as const };
  const a = accent ?? color;
  return (
    <Svg width={size} height={size} viewBox="0 0 24 24" aria-hidden>
      {name === 'floor' ? (
        <>
          <Rect x={3} y={4} width={18} height={16} rx={3} {...s} />
          <Circle cx={8} cy={9.5} r={1.6} fill={a} />
          <Circle cx={12} cy={9.5} r={1.6} {...s} />
          <Circle cx={16} cy={9.5} r={1.6} {...s} />
          <Circle cx={8} cy={14.5} r={1.6} {...s} />
          <Circle cx={12} cy={14.5} r={1.6} {...s} />
          <Circle cx={16} cy={14.5} r={1.6} {...s} />
        </>
      ) : name === 'alarms' ? (
        <>
          <Path d="M6 17V11a6 6 0 0 1 12 0v6" {...s} />
          <Path d="M4 17h16M10 20.2a2.2 2.2 0 0 0 4 0" {...s} />
          <Path d="M12 2.8v1.4" {...s} stroke={a} />
        </>
      ) : name === 'readings' ? (
        <>
          <Rect x={5} y={4} width={14} height={17} rx={2.5} {...s} />
          <Path d="M9 4V3h6v1" {...s} />
          <Path d="M8.5 15l2.2-3 2 2 2.8-4" {...s} stroke={a} />
        </>
      ) : name === 'plans' ? (
        <>
          <Path d="M6 3h8l4 4v14H6z" {...s} />
          <Path d="M14 3v4h4" {...s} />
          <Path d="M9 12h6M9 15.5h6M9 19h3.5" {...s} />
          <Circle cx={9} cy={8.5} r={1.2} fill={a} />
        </>
      ) : name === 'devices' ? (
        <>
          <Rect x={7} y={4} width={10} height={10} rx={2} {...s} />
          <Path d="M9 14v6M12 14v6M15 14v6" {...s} />
          <Circle cx={12} cy={9} r={1.8} fill={a} />
        </>
      ) : name === 'schedule' ? (
        <>
          <Rect x={3.5} y={5} width={17} height={15} rx={2.5} {...s} />
          <Path d="M3.5 10h17M8 3v4M16 3v4" {...s} />
          <Rect x={7} y={13} width={6} height={3.4} rx={1} fill={a} />
        </>
      ) : name === 'capacity' ? (
        <>
          <Path d="M4 20h16" {...s} />
          <Rect x={5} y={11} width={3.5} height={9} rx={1} {...s} />
          <Rect x={10.25} y={6} width={3.5} height={14} rx={1} {...s} />
          <Rect x={15.5} y={13} width={3.5} height={7} rx={1} fill={a} stroke={a} />
        </>
      ) : name === 'trends' ? (
        <>
          <Path d="M4 4v16h16" {...s} />
          <Path d="M7.5 15l3.5-4 3 2.5 5-6" {...s} stroke={a} />
        </>
      ) : name === 'people' ? (
        <>
          <Circle cx={9} cy={8.5} r={3} {...s} />
          <Path d="M3.5 19a5.5 5.5 0 0 1 11 0" {...s} />
          <Circle cx={16.5} cy={9.5} r={2.4} {...s} stroke={a} />
          <Path d="M15.5 14.2a4.6 4.6 0 0 1 5 4.8" {...s} stroke={a} />
        </>
      ) : name === 'mail' ? (
        <>
          <Rect x={3} y={5.5} width={18} height={13} rx={2.5} {...s} />
          <Path d="M4 7l8 6 8-6" {...s} stroke={a} />
        </>
      ) : name === 'rigs' ? (
        <>
          <Rect x={4} y={3} width={16} height={18} rx={2.5} {...s} />
          <Path d="M4 9h16M4 15h16" {...s} />
          <Circle cx={16.5} cy={6} r={1.1} fill={a} />
          <Path d="M7 12h5M7 18h5" {...s} />
        </>
      ) : name === 'approvals' ? (
        <>
          <Path d="M12 3l7 3v5.5c0 4.2-2.9 7.8-7 9.5-4.1-1.7-7-5.3-7-9.5V6z" {...s} />
          <Path d="M8.8 12.2l2.2 2.2 4.2-4.4" {...s} stroke={a} />
        </>
      ) : name === 'qualifications' ? (
        <>
          <Rect x={3.5} y={3.5} width={17} height={17} rx={2.5} {...s} />
          <Path d="M3.5 9.5h17M3.5 15h17M9.5 3.5v17M15 3.5v17" {...s} />
          <Path d="M16.2 17.6l1.3 1.3 2.2-2.4" {...s} stroke={a} />
        </>
      ) : name === 'audit' ? (
        <>
          <Path d="M5 5h9M5 10h9M5 15h6" {...s} />
          <Rect x={14.5} y={13} width={5} height={3.6} rx={1.8} {...s} stroke={a} />
          <Rect x={16.5} y={16.8} width={5} height={3.6} rx={1.8} {...s} />
        </>
      ) : name === 'more' ? (
        <>
          <Circle cx={6} cy={12} r={1.7} fill={color} />
          <Circle cx={12} cy={12} r={1.7} fill={a} />
          <Circle cx={18} cy={12} r={1.7} fill={color} />
        </>
      ) : name === 'account' ? (
        <>
          <Circle cx={12} cy={12} r={9} {...s} />
          <Circle cx={12} cy={10} r={3} {...s} />
          <Path d="M6.5 18.3a6.5 6.5 0 0 1 11 0" {...s} />
        </>
      ) : (
        <>
          <Path d="M10 4H6a2 2 0 0 0-2 2v12a2 2 0 0 0 2 2h4" {...s} />
          <Path d="M14 8l4 4-4 4M18 12H9" {...s} stroke={a} />
        </>
      )}
    </Svg>
  );
}
