/**
 * The event map (server/events.ts) against the server's source: every event in the map has at
 * least one emitter and one listener in server/, and nothing in server/ emits or listens to a name
 * outside the map. (The type-check already refuses an unknown name or a wrong payload on the typed
 * bus; this catches the other half: a mapped event that lost its emitter or all its listeners, as
 * when the floor stream once listened for 'run', which nobody emitted.)
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import * as events from '../../server/events';
import { eventMapNames, eventUses, serverFiles } from '../../scripts/event-usage';

const ROOT = path.resolve(__dirname, '../..');
const constants: Record<string, string> = {};
for (const [name, value] of Object.entries(events)) if (typeof value === 'string') constants[name] = value;
const mapNames = eventMapNames(fs.readFileSync(path.join(ROOT, 'server/events.ts'), 'utf8'), constants);
const uses = serverFiles(ROOT).flatMap((f) => eventUses(path.relative(ROOT, f), fs.readFileSync(f, 'utf8'), constants));

describe('the in-process event map', () => {
  it('lists the six events the server uses', () => {
    expect([...mapNames].sort()).toEqual([
      'alarm',
      'chamber-reported',
      'rig-status-changed',
      'run-event',
      'session-ended',
      'telemetry-landed',
    ]);
  });

  it('every mapped event is emitted somewhere in server/ and heard somewhere in server/', () => {
    const missing = mapNames.flatMap((name) => [
      ...(uses.some((u) => u.name === name && u.kind === 'emit') ? [] : [`${name}: no emitter`]),
      ...(uses.some((u) => u.name === name && u.kind === 'listen') ? [] : [`${name}: no listener`]),
    ]);
    expect(missing).toEqual([]);
  });

  it('nothing in server/ emits or listens to a name outside the map', () => {
    const stray = uses.filter((u) => !mapNames.includes(u.name)).map((u) => `${u.file}:${u.line} ${u.kind} ${u.name}`);
    expect(stray).toEqual([]);
  });

  it('the scanner sees emitters, listeners and stray names (so the checks above can fail)', () => {
    const src = [
      "import { ALARM_EVENT } from '../events';",
      'this.ctx.events.emit(ALARM_EVENT, x);',
      "ctx.events.on('notification', f);",
      'this.deps.events.off(RUN_EVENT, f);',
      "other.emit('not-the-bus', 1);",
    ].join('\n');
    expect(eventUses('x.ts', src, constants).map((u) => [u.kind, u.name, u.line])).toEqual([
      ['emit', 'alarm', 2],
      ['listen', 'notification', 3],
      ['off', 'run-event', 4],
    ]);
  });
});
