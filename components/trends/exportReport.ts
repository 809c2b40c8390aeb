import { Linking, Platform } from 'react-native';

/**
 * Download a report from the API. On the web an <a download> keeps the session cookie and the
 * browser saves the file; in the native app the system browser opens the address.
 */
export async function downloadReport(url: string, fileName: string): Promise<void> {
  if (Platform.OS === 'web') {
    const doc = (
      globalThis as unknown as {
        document?: {
          createElement: (t: 'a') => { href: string; download: string; rel: string; click: () => void; remove: () => void };
          body: { appendChild: (n: unknown) => void };
        };
      }
    ).document;
    if (!doc) return;
    const a = doc.createElement('a');
    a.href = url;
    a.download = fileName;
    a.rel = 'noopener';
    doc.body.appendChild(a);
    a.click();
    a.remove();
    return;
  }
  await Linking.openURL(url);
}
