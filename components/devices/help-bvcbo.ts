// Own module: the device page shows this one line without pulling the form's help (help.ts) into the shared chunk.
export const BVCBO_HELP =
  'BVCBO: collector-base breakdown with the emitter open. The highest reverse voltage the collector junction holds on its own. ' +
  'HTRB and THB bias is set as a fraction of it (80 % is usual).';
