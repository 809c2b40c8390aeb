import { useId } from 'react';
import { View } from 'react-native';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';
import type { ColumnSelectProps } from './ColumnSelect';

/**
 * One compact row per column: its name (and the unit read from the header) beside the browser's
 * own select, so the whole mapping fits one phone screen whatever the file's header count.
 */
export function ColumnSelect({ label, options, value, onChange, error, help, testID }: ColumnSelectProps) {
  const id = useId();
  return (
    <View style={{ gap: 2 }} testID={testID}>
      <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs }}>
        <View style={{ flex: 1, minWidth: 0 }}>
          <label htmlFor={id} style={{ display: 'block' }}>
            <Text variant="label">{label}</Text>
          </label>
          {help && !error ? (
            <Text variant="caption" tone="muted">
              {help}
            </Text>
          ) : null}
        </View>
        <select
          id={id}
          value={value}
          onChange={(e) => onChange(e.target.value)}
          aria-invalid={error ? true : undefined}
          style={{
            flex: '0 1 52%',
            minWidth: 0,
            height: 40,
            padding: `0 ${space.xs}px`,
            borderRadius: radius.md,
            border: `${error ? 2 : 1}px solid ${error ? tones.danger.fg : colors.borderStrong}`,
            background: colors.surface,
            color: colors.ink,
            fontFamily: 'Lexend_400Regular, system-ui, sans-serif',
            fontSize: 15,
          }}
        >
          {options.map((o) => (
            <option key={o.value} value={o.value}>
              {o.label}
            </option>
          ))}
        </select>
      </View>
      {error ? (
        <Text variant="caption" tone="danger">
          {error}
        </Text>
      ) : null}
    </View>
  );
}
