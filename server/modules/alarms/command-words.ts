/**
 * A rig command's failure in the operator's words: what the rig link reports ("Command trip
 * (trip:OV-01:3:…) timed out after 5000 ms: rig OV-01 did not acknowledge.") carries internal
 * command ids that mean nothing on the floor; alarm texts show this instead.
 */
export function commandErrorWords(error: string): string {
  const t = /timed out after (\d+) ms: (.*?)\.?$/.exec(error);
  if (t) {
    const s = Number(t[1]) / 1000;
    return `no answer within ${Number.isInteger(s) ? s : s.toFixed(1)} s: ${t[2]}`;
  }
  // Any other text: drop ids of the form "(run:…)" / "(trip:…)" and bare ones.
  return error
    .replace(/\s*\((?:run|trip):[^)]*\)/g, '')
    .replace(/\b(?:run|trip):[0-9A-Za-z:._-]+/g, 'the command')
    .replace(/\.$/, '')
    .trim();
}
