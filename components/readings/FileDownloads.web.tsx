import { View } from 'react-native';
import { exampleCsv, templateCsv } from '@/shared/domain/measurement-columns';
import { space } from '@/components/theme/tokens';
import { Button } from '@/components/ui/Button';

function download(name: string, text: string) {
  const url = URL.createObjectURL(new Blob([text], { type: 'text/csv;charset=utf-8' }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** The template (our headers with units, one example row) and a worked example file. */
export function FileDownloads() {
  return (
    <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
      <Button
        size="sm"
        variant="secondary"
        label="Download template CSV"
        onPress={() => download('emberlot-read-point-template.csv', templateCsv())}
        testID="download-template"
      />
      <Button
        size="sm"
        variant="quiet"
        label="Download example file"
        onPress={() => download('emberlot-read-point-example.csv', exampleCsv())}
        testID="download-example"
      />
    </View>
  );
}
