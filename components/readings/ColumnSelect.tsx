import { SegmentedChoice } from '@/components/ui/SegmentedChoice';

export interface ColumnSelectProps {
  label: string;
  options: Array<{ value: string; label: string }>;
  value: string;
  onChange: (v: string) => void;
  error?: string;
  help?: string;
  testID?: string;
}

/** Phones and tablets without the browser: the choice as segments (files are uploaded from the web app). */
export function ColumnSelect({ label, options, value, onChange, error, help, testID }: ColumnSelectProps) {
  return <SegmentedChoice label={label} options={options} value={value} onChange={onChange} error={error} help={help} testID={testID} />;
}
