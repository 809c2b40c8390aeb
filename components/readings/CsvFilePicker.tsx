import { View } from 'react-native';
import type { PickedFile } from '@/components/queries/measurements';
import { Banner } from '@/components/ui/Banner';

export interface CsvFilePickerProps {
  onPick: (file: PickedFile, text: string) => void;
  disabled?: boolean;
  fileName?: string | null;
}

/**
 * Phones and tablets: no file picker is bundled, so files are uploaded from the web app on a lab
 * PC. Manual entry below works everywhere. (CsvFilePicker.web.tsx is the browser version.)
 */
export function CsvFilePicker(_props: CsvFilePickerProps) {
  return (
    <View>
      <Banner tone="info" title="Upload files from a lab PC">
        Open Emberlot in a browser on the tester's PC to upload its CSV file. On this device, enter a few readings by hand below.
      </Banner>
    </View>
  );
}
