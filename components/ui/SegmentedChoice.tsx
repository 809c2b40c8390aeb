import { Pressable, View } from 'react-native';
import Svg, { Path } from 'react-native-svg';
import { colors, radius, space, touch } from '@/components/theme/tokens';
import { StatusShape } from './StatusShape';
import { Text } from './Text';

export interface Choice<T extends string> {
  value: T;
  label: string;
}

interface Props<T extends string> {
  /** Visible group label, also the radiogroup's accessible name. */
  label: string;
  options: readonly Choice<T>[];
  /** undefined = nothing chosen yet. */
  value: T | undefined;
  onChange: (v: T) => void;
  error?: string;
  help?: string;
  disabled?: boolean;
  /** Hide the visible label (the accessible name stays). */
  hideLabel?: boolean;
  testID?: string;
}

/** A small set of exclusive options shown all at once (a select for ≤ 5 choices). Wraps on a phone. */
export function SegmentedChoice<T extends string>({ label, options, value, onChange, error, help, disabled, hideLabel, testID }: Props<T>) {
  return (
    <View style={{ gap: space.xs }} testID={testID}>
      {hideLabel ? null : <Text variant="label">{label}</Text>}
      <View accessibilityRole="radiogroup" accessibilityLabel={label} style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
        {options.map((o) => {
          const selected = o.value === value;
          return (
            <Pressable
              key={o.value}
              accessibilityRole="radio"
              accessibilityLabel={o.label}
              accessibilityState={{ checked: selected, disabled }}
              aria-checked={selected}
              disabled={disabled}
              onPress={() => onChange(o.value)}
              style={(state) => {
                const { pressed, hovered, focused } = state as { pressed: boolean; hovered?: boolean; focused?: boolean };
                return [
                  {
                    minHeight: touch - 4,
                    paddingHorizontal: space.sm,
                    borderRadius: radius.md,
                    borderWidth: 1,
                    borderColor: selected ? colors.graphite : colors.borderStrong,
                    backgroundColor: selected ? colors.graphite : pressed || hovered ? colors.surfaceSunken : colors.surface,
                    flexDirection: 'row',
                    alignItems: 'center',
                    gap: space.xs - 2,
                    opacity: disabled ? 0.5 : 1,
                  },
                  focused ? ({ outlineColor: colors.focus, outlineWidth: 2, outlineStyle: 'solid', outlineOffset: 2 } as object) : null,
                ];
              }}
            >
              {selected ? (
                <Svg width={14} height={14} viewBox="0 0 14 14" aria-hidden>
                  <Path
                    d="M2.5 7.3l2.8 2.8 6-6.2"
                    stroke={colors.inkInverse}
                    strokeWidth={2}
                    fill="none"
                    strokeLinecap="round"
                    strokeLinejoin="round"
                  />
                </Svg>
              ) : null}
              <Text variant="label" tone={selected ? 'inverse' : 'default'}>
                {o.label}
              </Text>
            </Pressable>
          );
        })}
      </View>
      {error ? (
        <View style={{ flexDirection: 'row', gap: space.xs, alignItems: 'center' }}>
          <StatusShape tone="danger" size={14} />
          <Text variant="caption" tone="danger">
            {error}
          </Text>
        </View>
      ) : null}
      {help ? (
        <Text variant="caption" tone="subtle">
          {help}
        </Text>
      ) : null}
    </View>
  );
}
