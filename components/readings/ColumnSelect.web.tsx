import { useId } from 'react';
import { View } from 'react-native';
import { colors, radius, space, tones } from '@/components/theme/tokens';
import { Text } from '@/components/ui/Text';
import type { ColumnSelectProps } from './ColumnSelect';

/** One compact line per column: the browser's own select (fits a phone screen whatever the file's header count). */
export function ColumnSelect({ label, options, value, onChange, error, help, testID }: ColumnSelectProps) {
  const id = useId();
  return (
    <View style={{ gap: 2 }} testID={testID}>
      <label htmlFor={id} style={{ display: 'block' }}>
        <Text variant="label">{label}</Text>
      </label>
      <select
        id={id}
        value={value}
        onChange={(e) => onChange(e.target.value)}
        aria-invalid={error ? true : undefined}
        style={{
          minHeight: 40,
          maxWidth: '100%',
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
      {error ? (
        <Text variant="caption" tone="danger">
          {error}
        </Text>
      ) : help ? (
        <Text variant="caption" tone="muted">
          {help}
        </Text>
      ) : null}
    </View>
  );
}
