import { Link } from 'expo-router';
import { createElement, useRef } from 'react';
import { Platform, Pressable, StyleSheet, View } from 'react-native';
import type { SerialRowProblem } from '@/shared/schemas/devices';
import type { PickedFile } from '@/components/queries/lots';
import { colors, radius, space } from '@/components/theme/tokens';
import { Banner } from '@/components/ui/Banner';
import { Button } from '@/components/ui/Button';
import { StatusShape } from '@/components/ui/StatusShape';
import { deviceHistoryHref } from './links';
import { Text } from '@/components/ui/Text';
import { countOf } from '@/shared/domain/format';

/** How a serial list is accepted (shown beside every serial entry). */
export const SERIAL_POLICY =
  'A list is stored whole or not at all: if any row is empty, longer than 40 characters, repeated, or already in the lot, ' +
  'nothing is stored and every bad row is listed so you can fix the file and upload it again.';

export const CSV_HELP =
  'A CSV file with a column headed “serial” (other columns are ignored), or a single column of serials with or without that header. Up to 10,000 rows, 512 KB.';

/** Every refused row, with its row/line number and reason; shown after a refused list or file. */
export function SerialProblems({ rows, where, title }: { rows: SerialRowProblem[]; where: 'list' | 'file'; title?: string }) {
  if (rows.length === 0) return null;
  const shown = rows.slice(0, 200);
  return (
    <Banner
      tone="danger"
      title={title ?? `${rows.length} ${rows.length === 1 ? 'row needs' : 'rows need'} fixing — nothing was stored`}
      testID="serial-problems"
    >
      <View accessibilityRole="list" style={{ gap: space.xxs }}>
        {shown.map((r) => (
          <View key={`${r.row}-${r.reason}`} role="listitem" style={{ flexDirection: 'row', gap: space.xs, alignItems: 'flex-start' }}>
            <View style={{ paddingTop: 3 }}>
              <StatusShape tone="danger" size={12} />
            </View>
            <Text variant="caption" style={{ flexShrink: 1 }}>
              {where === 'file' ? 'Line' : 'Row'} {r.row}
              {r.serial ? ` “${r.serial.length > 50 ? r.serial.slice(0, 50) + '…' : r.serial}”` : ' (empty)'}: {r.reason}
            </Text>
          </View>
        ))}
        {rows.length > shown.length ? (
          <Text variant="caption" tone="muted">
            …and {rows.length - shown.length} more.
          </Text>
        ) : null}
      </View>
    </Banner>
  );
}

/** A preview of the serials a list holds: count and the first few. */
export function SerialPreview({ serials }: { serials: string[] }) {
  if (serials.length === 0) return null;
  return (
    <Text variant="caption" tone="muted" testID="serial-preview">
      {countOf(serials.length, 'serial')}: {serials.slice(0, 6).join(', ')}
      {serials.length > 6 ? ', …' : ''}
    </Text>
  );
}

interface PickProps {
  label: string;
  onPick: (f: PickedFile) => void;
  busy?: boolean;
  testID?: string;
}

/** Opens the browser's file chooser for a CSV. On a phone app build, paste the list instead. */
export function FilePickButton({ label, onPick, busy, testID }: PickProps) {
  const input = useRef<{ click: () => void } | null>(null);
  if (Platform.OS !== 'web') {
    return (
      <Text variant="caption" tone="muted">
        File upload works in the browser. On this device, paste the serials instead.
      </Text>
    );
  }
  return (
    <View>
      <Button label={label} onPress={() => input.current?.click()} busy={busy} busyLabel="Reading the file…" testID={testID} />
      {createElement('input', {
        type: 'file',
        accept: '.csv,text/csv,text/plain',
        ref: input,
        style: { display: 'none' },
        'aria-hidden': true,
        tabIndex: -1,
        onChange: (e: { target: { files?: ArrayLike<Blob & { name: string }> | null; value: string } }) => {
          const f = e.target.files?.[0];
          if (f) onPick({ name: f.name, blob: f });
          e.target.value = '';
        },
      })}
    </View>
  );
}

/** A quiet box listing serials (lot detail). */
export function SerialGrid({ serials }: { serials: Array<{ id: string; serial: string }> }) {
  return (
    <View
      accessibilityRole="list"
      accessibilityLabel="Serials in this lot"
      style={{
        flexDirection: 'row',
        flexWrap: 'wrap',
        gap: space.xs,
        padding: space.sm,
        borderRadius: radius.md,
        backgroundColor: colors.surfaceSunken,
      }}
    >
      {serials.map((s) => (
        <View key={s.id} role="listitem">
          <Link href={deviceHistoryHref(s.id)} asChild>
            <Pressable accessibilityRole="link" accessibilityLabel={`History of device ${s.serial}`} style={CHIP}>
              <Text variant="caption">{s.serial}</Text>
            </Pressable>
          </Link>
        </View>
      ))}
    </View>
  );
}

/** One flat style object: a Pressable inside <Link asChild> crashes react-native-web with an array. */
const CHIP = StyleSheet.flatten({
  paddingHorizontal: space.xs,
  paddingVertical: 2,
  borderRadius: radius.sm,
  backgroundColor: colors.surface,
  borderWidth: 1,
  borderColor: colors.border,
});
