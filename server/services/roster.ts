import { parse } from 'csv-parse/sync';
import { stringify } from 'csv-stringify/sync';
import type { Knex } from 'knex';
import { z } from 'zod';
import {
  ROSTER_COLUMNS,
  ROSTER_MAX_ROWS,
  crewField,
  parseRolesCell,
  type RosterImportProgress,
  type RosterImportResult,
  type RosterPreview,
  type RosterRowView,
} from '../../shared/billing';
import { emailField } from '../../shared/auth';
import type { AppContext } from '../context';
import { HttpError, notFound } from '../middleware/errors';
import { recordAudit } from './audit';
import { deliverInvitation } from './invitations';
import type { Actor } from './seats';

/**
 * Roster CSV: columns name, email, roles, crew (a header row names them, in any order and case).
 * Row numbers are spreadsheet rows: the header is row 1. The whole file is checked before anything
 * is written; any bad row means nothing is imported, and every bad row is listed. People who are
 * already members or already have an open invitation are skipped, not errors, so the same roster
 * can be uploaded again as the crew grows.
 */

const REQUIRED_COLUMNS = ['name', 'email'] as const;
const nameField = z.string().trim().min(1, 'is required').max(120, 'must be at most 120 characters');

interface ParsedRow {
  row: number;
  name: string;
  email: string;
  roles: string[];
  crew: string | null;
  problems: { field: string; message: string }[];
}

function looksBinary(bytes: Buffer): string | null {
  const head = bytes.subarray(0, 8);
  if (head.subarray(0, 4).equals(Buffer.from([0x50, 0x4b, 0x03, 0x04]))) {
    return 'This file is a spreadsheet workbook or a zip archive, not CSV. In your spreadsheet program choose "Save as" → "CSV UTF-8", then upload that file.';
  }
  if (head.subarray(0, 4).equals(Buffer.from('%PDF'))) return 'This file is a PDF, not a CSV roster.';
  if (bytes.includes(0)) return 'This file is not a CSV text file. Save the roster as "CSV UTF-8" and upload that.';
  try {
    new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    return 'This file is not UTF-8 text. Save the roster as "CSV UTF-8" and upload that.';
  }
  return null;
}

const fileProblem = (message: string) => new HttpError(400, 'invalid_roster', message, [{ field: 'roster', message: `roster: ${message}` }]);

/** Reads and checks every row of the file on its own (no database). Throws for a file that is not a usable CSV. */
export function parseRoster(bytes: Buffer): ParsedRow[] {
  if (!bytes.length) throw fileProblem('The file is empty. Download the template, fill it in and upload it again.');
  const binary = looksBinary(bytes);
  if (binary) throw fileProblem(binary);
  let records: { record: string[]; info: { records: number } }[];
  try {
    records = parse(bytes, { bom: true, info: true, relax_column_count: true, skip_empty_lines: false, trim: true, max_record_size: 10_000 }) as unknown as typeof records;
  } catch (error) {
    const e = error as { message?: string; lines?: number };
    throw fileProblem(`The CSV could not be read${e.lines ? ` near line ${e.lines}` : ''}: ${e.message ?? 'it is not valid CSV'}. Check for a stray quote mark.`);
  }
  const header = records.shift();
  if (!header) throw fileProblem('The file is empty. Download the template, fill it in and upload it again.');
  const columns = header.record.map((cell) => cell.trim().toLowerCase());
  const missing = REQUIRED_COLUMNS.filter((c) => !columns.includes(c));
  if (missing.length) {
    throw fileProblem(`The first row must name the columns (${ROSTER_COLUMNS.join(', ')}); ${missing.map((m) => `"${m}"`).join(' and ')} ${missing.length > 1 ? 'are' : 'is'} missing. Download the template to see the layout.`);
  }
  const at = (record: string[], column: string) => {
    const index = columns.indexOf(column);
    return index >= 0 ? (record[index] ?? '').trim() : '';
  };
  const body = records.filter((r) => r.record.some((cell) => cell.trim() !== ''));
  if (body.length === 0) throw fileProblem('The file has a header row but no people in it.');
  if (body.length > ROSTER_MAX_ROWS) {
    throw new HttpError(413, 'too_many_rows', `The roster has ${body.length.toLocaleString('en-US')} people; one file can hold at most ${ROSTER_MAX_ROWS.toLocaleString('en-US')}. Split it into smaller files.`, [
      { field: 'roster', message: `roster: has ${body.length} rows; at most ${ROSTER_MAX_ROWS} are allowed` },
    ]);
  }

  const firstRowOf = new Map<string, number>();
  return body.map(({ record, info }) => {
    const row = info.records;
    const problems: ParsedRow['problems'] = [];
    const add = (field: string, message: string) => problems.push({ field: `rows.${row}.${field}`, message: `Row ${row}: ${field} ${message}` });

    const name = nameField.safeParse(at(record, 'name'));
    if (!name.success) add('name', name.error.issues[0].message);
    const rawEmail = at(record, 'email');
    const email = emailField.safeParse(rawEmail);
    if (!email.success) add('email', rawEmail ? `"${rawEmail}" ${email.error.issues[0].message}` : 'is required');
    const { roles, unknown } = parseRolesCell(at(record, 'roles'));
    if (unknown.length) add('roles', `has ${unknown.map((u) => `"${u}"`).join(', ')}, which ${unknown.length > 1 ? 'are not roles' : 'is not a role'}; use admin, manager or crew`);
    const crew = crewField.safeParse(at(record, 'crew'));
    if (!crew.success) add('crew', crew.error.issues[0].message);
    if (email.success) {
      const first = firstRowOf.get(email.data);
      if (first !== undefined) add('email', `repeats row ${first} (${email.data}); each person once`);
      else firstRowOf.set(email.data, row);
    }
    return {
      row,
      name: name.success ? name.data : at(record, 'name'),
      email: email.success ? email.data : rawEmail,
      roles,
      crew: crew.success ? (crew.data ?? null) : at(record, 'crew'),
      problems,
    };
  });
}

/** The parsed rows with what would happen to each: invite, skip (already in), or fix. */
async function planRoster(db: Knex | Knex.Transaction, companyId: string, bytes: Buffer): Promise<RosterRowView[]> {
  const rows = parseRoster(bytes);
  const emails = rows.filter((r) => !r.problems.length).map((r) => r.email);
  const members = new Set<string>();
  const invited = new Set<string>();
  for (let i = 0; i < emails.length; i += 1000) {
    const chunk = emails.slice(i, i + 1000);
    const m: { email: string }[] = await db('memberships as m').join('users as u', 'u.id', 'm.user_id').where('m.company_id', companyId).whereIn('u.email', chunk).select('u.email');
    m.forEach((x) => members.add(x.email.toLowerCase()));
    const inv: { email: string }[] = await db('invitations').where({ company_id: companyId }).whereNull('accepted_at').whereNull('revoked_at').whereIn('email', chunk).select('email');
    inv.forEach((x) => invited.add(x.email.toLowerCase()));
  }
  return rows.map((r) => {
    let action: RosterRowView['action'] = 'invite';
    let note: string | null = null;
    if (r.problems.length) action = 'fix';
    else if (members.has(r.email)) [action, note] = ['skip', 'Already a member'];
    else if (invited.has(r.email)) [action, note] = ['skip', 'Already invited; resend from the invitations list if needed'];
    return { row: r.row, name: r.name, email: r.email, roles: r.roles, crew: r.crew, action, note, problems: r.problems };
  });
}

function summarise(fileName: string, rows: RosterRowView[]): RosterPreview {
  return {
    fileName,
    total: rows.length,
    toInvite: rows.filter((r) => r.action === 'invite').length,
    toSkip: rows.filter((r) => r.action === 'skip').length,
    withProblems: rows.filter((r) => r.action === 'fix').length,
    rows,
  };
}

export async function previewRoster(knex: Knex, companyId: string, bytes: Buffer, fileName: string): Promise<RosterPreview> {
  return summarise(fileName, await planRoster(knex, companyId, bytes));
}

function rejectProblems(preview: RosterPreview) {
  const bad = preview.rows.filter((r) => r.action === 'fix');
  const fields = bad.flatMap((r) => r.problems);
  return new HttpError(
    400,
    'roster_invalid',
    `${bad.length} ${bad.length === 1 ? 'row has' : 'rows have'} problems (${bad.map((r) => r.row).slice(0, 20).join(', ')}${bad.length > 20 ? ', …' : ''}); nothing was imported. Fix ${bad.length === 1 ? 'it' : 'them'} and upload the file again.`,
    fields,
  );
}

/** Sends the invitations of one import, a few at a time; resumable, since unsent rows simply stay unsent. */
const deliveries = new WeakMap<AppContext, Set<string>>();

export function ensureImportDelivery(ctx: AppContext, importId: string) {
  let running = deliveries.get(ctx);
  if (!running) deliveries.set(ctx, (running = new Set()));
  if (running.has(importId)) return;
  running.add(importId);
  void (async () => {
    try {
      for (;;) {
        const batch: { id: string }[] = await ctx.knex('invitations')
          .where({ roster_import_id: importId })
          .whereNull('sent_at')
          .whereNull('send_error')
          .whereNull('accepted_at')
          .whereNull('revoked_at')
          .orderBy('created_at')
          .limit(4)
          .select('id');
        if (!batch.length) break;
        const results = await Promise.all(batch.map((b) => deliverInvitation(ctx, b.id).catch(() => false)));
        // Rows that could not be claimed (revoked meanwhile) or failed are marked; stop if nothing moved.
        if (results.every((ok) => !ok)) {
          const stuck = await ctx.knex('invitations').whereIn('id', batch.map((b) => b.id)).whereNull('sent_at').whereNull('send_error').whereNull('revoked_at').count<{ count: number }[]>('* as count');
          if (Number(stuck[0].count) > 0) break;
        }
      }
    } catch (err) {
      ctx.logger.warn({ err, importId }, 'roster delivery stopped');
    } finally {
      running!.delete(importId);
    }
  })();
}

/**
 * Imports the roster in one transaction: every invitation or none. The e-mails go out after the
 * commit, in the background; `rosterProgress` reports how far they are.
 */
export async function importRoster(ctx: AppContext, companyId: string, bytes: Buffer, fileName: string, actor: Actor = {}): Promise<RosterImportResult> {
  const result = await ctx.knex.transaction(async (trx) => {
    const preview = summarise(fileName, await planRoster(trx, companyId, bytes));
    if (preview.withProblems) throw rejectProblems(preview);
    const rows = preview.rows.filter((r) => r.action === 'invite');
    if (!rows.length) {
      throw new HttpError(409, 'nothing_to_import', 'Everyone on this roster is already a member or already invited; nothing new to import.');
    }
    const [batch] = await trx('roster_imports').insert({ company_id: companyId, created_by: actor.userId ?? null, file_name: fileName, row_count: preview.total }).returning('id');
    try {
      for (let i = 0; i < rows.length; i += 500) {
        await trx('invitations').insert(
          rows.slice(i, i + 500).map((r) => ({
            company_id: companyId,
            email: r.email,
            name: r.name,
            roles: r.roles,
            crew: r.crew,
            invited_by: actor.userId ?? null,
            roster_import_id: batch.id,
          })),
        );
      }
    } catch (error) {
      if ((error as { code?: string }).code === '23505') {
        throw new HttpError(409, 'roster_changed', 'Someone invited one of these people while the roster was importing; nothing was imported. Upload the file again to see the current state.');
      }
      throw error;
    }
    await recordAudit(trx, {
      actorUserId: actor.userId,
      companyId,
      action: 'roster.imported',
      targetType: 'roster_import',
      targetId: batch.id,
      details: { fileName, rows: preview.total, invited: rows.length, skipped: preview.toSkip },
      ip: actor.ip,
    });
    return { importId: batch.id as string, invited: rows.length, skipped: preview.toSkip };
  });
  ensureImportDelivery(ctx, result.importId);
  return result;
}

export async function rosterProgress(ctx: AppContext, companyId: string, importId: string): Promise<RosterImportProgress> {
  const batch = await ctx.knex('roster_imports').where({ id: importId, company_id: companyId }).first('id');
  if (!batch) throw notFound('Roster import');
  const [counts] = await ctx.knex('invitations')
    .where({ roster_import_id: importId })
    .select(
      ctx.knex.raw('count(*)::int as total'),
      ctx.knex.raw('count(sent_at)::int as sent'),
      ctx.knex.raw('count(*) filter (where sent_at is null and send_error is not null)::int as failed'),
      ctx.knex.raw('count(*) filter (where sent_at is null and send_error is null and accepted_at is null and revoked_at is null)::int as pending'),
    );
  // A restart may have interrupted the sending; polling picks it up again.
  if (counts.pending > 0) ensureImportDelivery(ctx, importId);
  return { importId, total: counts.total, sent: counts.sent, failed: counts.failed, done: counts.pending === 0 };
}

export function rosterTemplateCsv(): string {
  return stringify(
    [
      ['name', 'email', 'roles', 'crew'],
      ['Avery Example', 'avery.example@your-company.example', 'crew', 'West crew'],
      ['Jordan Sample', 'jordan.sample@your-company.example', 'crew; manager', 'East crew'],
      ['Morgan Placeholder', 'morgan.placeholder@your-company.example', 'admin', ''],
    ],
    { record_delimiter: '\r\n' },
  );
}
