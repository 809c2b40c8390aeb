import { useRef, type ChangeEvent } from 'react';
import { View } from 'react-native';
import { space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';
import { Text } from '@/components/ui/Text';
import type { CsvFilePickerProps } from './CsvFilePicker';

/** Largest slice read in the browser to find the header line; the server reads the whole file. */
const HEADER_SLICE = 64 * 1024;

/** The browser's own file dialog, behind an Emberlot button. */
export function CsvFilePicker({ onPick, disabled, fileName }: CsvFilePickerProps) {
  const input = useRef<HTMLInputElement | null>(null);
  const onChange = async (e: ChangeEvent<HTMLInputElement>) => {
    const f = e.target.files?.[0];
    e.target.value = '';
    if (!f) return;
    const text = await f.slice(0, HEADER_SLICE).text();
    onPick({ name: f.name, size: f.size, blob: f, type: f.type || 'text/csv' }, text);
  };
  return (
    <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' }}>
      <input
        ref={input}
        type="file"
        accept=".csv,text/csv,text/plain"
        onChange={onChange}
        style={{ display: 'none' }}
        aria-hidden
        tabIndex={-1}
        data-testid="csv-file-input"
      />
      <Button
        label={fileName ? 'Choose another file' : 'Choose CSV file'}
        variant="secondary"
        disabled={disabled}
        onPress={() => input.current?.click()}
        testID="csv-choose"
      />
      {fileName ? <Text variant="label">{fileName}</Text> : <Text tone="muted">No file chosen</Text>}
    </View>
  );
}
