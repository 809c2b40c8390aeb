import multer from 'multer';

/**
 * Every multipart upload goes through this: files held in memory (they are small CSVs), and part
 * header parameters read as UTF-8. Browsers send a file name as raw UTF-8 bytes in
 * `filename="…"` (WHATWG HTML, "multipart/form-data encoding algorithm"); busboy's default of
 * latin1 turned `Prüfung.csv` into `PrÃ¼fung.csv` (issue #18, point 10).
 */
export function memoryUpload(limits: multer.Options['limits']): multer.Multer {
  return multer({ storage: multer.memoryStorage(), limits, defParamCharset: 'utf8' });
}
