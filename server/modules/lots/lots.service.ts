import { ILike, In, type DataSource, type EntityManager } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import {
  checkSerialRows,
  type Lot,
  type LotDetail,
  type LotInput,
  type LotPatch,
  type SerialRowProblem,
} from '../../../shared/schemas/devices';
import { DeviceEntity, DeviceTypeEntity, LotEntity } from '../../db/entities';
import { AppError, conflict, notFound, unprocessable } from '../../http/errors';
import type { AuditService } from '../audit/audit.service';
import { listLotRows, lotRowsById, type LotRow } from './lots.data';

/**
 * Serial lists are stored whole or not at all. If any row is bad (empty, too long, a control
 * character, a repeat within the list, already in the lot), the answer is 422 listing every bad row
 * with its reason — in `rows` and, for forms, in `fields` keyed by row — and nothing is stored, so a
 * corrected file can simply be uploaded again without creating half-registered lots.
 */
export function badSerialsError(problems: SerialRowProblem[], total: number, where: 'list' | 'file'): AppError {
  const fields: Record<string, string[]> = {};
  for (const p of problems) (fields[`${where === 'file' ? 'line' : 'serials'}.${p.row}`] ??= []).push(p.reason);
  const n = problems.length;
  const message =
    `${n} of ${total} ${where === 'file' ? 'rows in the file' : 'serials'} ${n === 1 ? 'is' : 'are'} not usable; nothing was stored. ` +
    `First: ${where === 'file' ? 'line' : 'row'} ${problems[0].row}${problems[0].serial ? ` “${problems[0].serial.slice(0, 60)}”` : ''} — ${problems[0].reason}.`;
  return new AppError('unprocessable', message, fields, { rows: problems });
}

const LOT_PATCH_FIELDS = ['dateCode', 'notes', 'waferLot', 'assemblyLot', 'dieRevision'] as const;

const toLot = (r: LotRow): Lot => ({
  id: r.id,
  code: r.code,
  deviceTypeId: r.device_type_id,
  partNumber: r.part_number,
  quantity: r.quantity,
  dateCode: r.date_code,
  notes: r.notes,
  waferLot: r.wafer_lot,
  assemblyLot: r.assembly_lot,
  dieRevision: r.die_revision,
  deviceCount: r.device_count,
  createdAt: new Date(r.created_at).toISOString(),
});

export class LotsService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
  ) {}

  async list(filter: { deviceTypeId?: string; q?: string }): Promise<Lot[]> {
    const rows = await listLotRows(this.ds, filter);
    return rows.map(toLot);
  }

  async get(id: string, m: EntityManager = this.ds.manager): Promise<LotDetail> {
    const [row] = await lotRowsById(m, id);
    if (!row) throw notFound('The lot');
    const devices = await m.find(DeviceEntity, { where: { lotId: id }, order: { serial: 'ASC' } });
    return { ...toLot(row), serials: devices.map((d) => ({ id: d.id, serial: d.serial })) };
  }

  async create(actor: SessionUser, input: LotInput): Promise<LotDetail> {
    return this.ds.transaction(async (m) => {
      const type = await m.findOneBy(DeviceTypeEntity, { id: input.deviceTypeId });
      if (!type) throw unprocessable('The device type for this lot was not found. Choose one from the list.');
      if (await m.exists(LotEntity, { where: { code: ILike(input.code.replace(/[\\%_]/g, (c) => `\\${c}`)) } })) {
        throw conflict(`A lot with the code ${input.code} already exists.`);
      }
      const { serials, problems } = checkSerialRows(input.serials, new Set(), undefined, `lot ${input.code}`);
      if (problems.length) throw badSerialsError(problems, input.serials.length, 'list');
      this.assertFits(input.code, input.quantity, 0, serials.length);
      const lot = await m
        .save(
          m.create(LotEntity, {
            code: input.code,
            deviceTypeId: type.id,
            quantity: input.quantity,
            dateCode: input.dateCode,
            notes: input.notes,
            waferLot: input.waferLot,
            assemblyLot: input.assemblyLot,
            dieRevision: input.dieRevision,
          }),
        )
        .catch((e) => {
          // Two people creating the same code at once: the unique index decides.
          if ((e as { code?: string }).code === '23505') throw conflict(`A lot with the code ${input.code} already exists.`);
          throw e;
        });
      await this.insertSerials(m, lot.id, serials);
      await this.audit.record(
        {
          actor,
          action: 'lot.create',
          entity: 'lot',
          entityId: lot.id,
          details: { code: lot.code, partNumber: type.partNumber, quantity: lot.quantity, serials: serials.length },
        },
        m,
      );
      return this.get(lot.id, m);
    });
  }

  /** Changes a lot's descriptive and traceability fields; the audit entry keeps each field's before and after. */
  async update(actor: SessionUser, id: string, patch: LotPatch): Promise<LotDetail> {
    return this.ds.transaction(async (m) => {
      const lot = await m.findOne(LotEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!lot) throw notFound('The lot');
      const changes: Record<string, { from: string; to: string }> = {};
      for (const k of LOT_PATCH_FIELDS) {
        const to = patch[k];
        if (to !== undefined && to !== lot[k]) changes[k] = { from: lot[k], to };
      }
      if (Object.keys(changes).length) {
        await m.update(LotEntity, { id }, Object.fromEntries(Object.entries(changes).map(([k, v]) => [k, v.to])));
        await this.audit.record({ actor, action: 'lot.update', entity: 'lot', entityId: id, details: { code: lot.code, changes } }, m);
      }
      return this.get(id, m);
    });
  }

  /** Adds serials to a lot (typed/pasted list or the rows of an uploaded file), all or nothing. */
  async addSerials(
    actor: SessionUser,
    lotId: string,
    candidates: string[],
    source: { kind: 'list' } | { kind: 'file'; lines: number[]; fileName: string },
  ): Promise<LotDetail> {
    return this.ds.transaction(async (m) => {
      const lot = await m.findOne(LotEntity, { where: { id: lotId }, lock: { mode: 'pessimistic_write' } });
      if (!lot) throw notFound('The lot');
      // Only look up serials that could be stored: a control character (NUL above all) would make
      // PostgreSQL fail the query; checkSerialRows reports those rows with their reason instead.
      const trimmed = [...new Set(candidates.map((c) => c.trim()).filter((c) => c !== '' && !/[\u0000-\u001f\u007f]/.test(c)))];
      const present = trimmed.length ? await m.find(DeviceEntity, { where: { lotId, serial: In(trimmed) }, select: { serial: true } }) : [];
      const rowOf = source.kind === 'file' ? (i: number) => source.lines[i] : undefined;
      const { serials, problems } = checkSerialRows(candidates, new Set(present.map((d) => d.serial)), rowOf, `lot ${lot.code}`);
      if (problems.length) throw badSerialsError(problems, candidates.length, source.kind);
      const already = await m.count(DeviceEntity, { where: { lotId } });
      this.assertFits(lot.code, lot.quantity, already, serials.length);
      await this.insertSerials(m, lot.id, serials);
      await this.audit.record(
        {
          actor,
          action: 'lot.serials.add',
          entity: 'lot',
          entityId: lot.id,
          details: {
            code: lot.code,
            added: serials.length,
            source: source.kind,
            ...(source.kind === 'file' ? { fileName: source.fileName } : {}),
          },
        },
        m,
      );
      return this.get(lot.id, m);
    });
  }

  private assertFits(code: string, quantity: number, already: number, adding: number) {
    if (already + adding > quantity) {
      throw unprocessable(
        `Lot ${code} holds ${quantity} devices; ${already ? `${already} are registered, and ` : ''}${adding} more would make ${already + adding}. ` +
          'Check the list against the lot traveller.',
      );
    }
  }

  private async insertSerials(m: EntityManager, lotId: string, serials: string[]) {
    for (let i = 0; i < serials.length; i += 1000) {
      await m.insert(
        DeviceEntity,
        serials.slice(i, i + 1000).map((serial) => ({ lotId, serial })),
      );
    }
  }
}
