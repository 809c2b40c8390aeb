/** Phones and tablets: files are uploaded from the web app, where the template and example download. */
export function FileDownloads() {
  return null;
}
