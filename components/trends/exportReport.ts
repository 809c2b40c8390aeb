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

/**
 * Download a file the server may refuse (the certificate of conformance answers 409 with a reason):
 * on the web the file is fetched first and saved only when the answer is the file, otherwise the
 * server's message is thrown for the screen to show.
 */
export async function downloadChecked(url: string, fileName: string): Promise<void> {
  if (Platform.OS !== 'web') {
    await Linking.openURL(url);
    return;
  }
  const res = await fetch(url, { credentials: 'include' });
  if (!res.ok) {
    let message = `The server answered ${res.status}.`;
    try {
      const body: unknown = await res.json();
      const m = (body as { error?: { message?: unknown } } | null)?.error?.message;
      if (typeof m === 'string') message = m;
    } catch {
      // not JSON: keep the status line
    }
    throw new Error(message);
  }
  const blob = await res.blob();
  const web = globalThis as unknown as { URL: { createObjectURL: (b: Blob) => string; revokeObjectURL: (u: string) => void } };
  const href = web.URL.createObjectURL(blob);
  try {
    await downloadReport(href, fileName);
  } finally {
    setTimeout(() => web.URL.revokeObjectURL(href), 10_000);
  }
}
