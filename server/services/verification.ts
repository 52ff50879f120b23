import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { parse } from 'csv-parse/sync';
import { stringify } from 'csv-stringify/sync';
import { HttpError, notFound } from '../middleware/errors';
import { parseCertificateNumber } from './certificate-number';
import type { ReadCache } from './read-cache';
import { effectiveStatus, todayUtc, type CertificateRow } from './certificates';
import {
  BATCH_MAX_ROWS, type BatchAnswer, type BatchRow, type BatchSummary, type CertificateStatus, type LookupEntry, type VerificationAnswer,
} from '../../shared/certificates';

/**
 * Verification: the public lookup of one number, the authenticity check of an uploaded PDF, the
 * auditor's CSV batch, and the log every one of them writes. The answer holds the minimum (status,
 * holder's name, area, dates); never an e-mail address or anything about the company.
 */
export type LookupKind = 'single' | 'batch' | 'file';
export type LookupResult = CertificateStatus | 'not-found' | 'malformed' | 'authentic' | 'not-authentic';

export interface LookupCaller {
  userId?: string | null;
  ipHash?: string | null;
}

/** A keyed hash of the caller's address: stable enough to spot abuse, useless for finding anyone. */
const ipHashes = new Map<string, string>();
export function hashIp(ip: string | undefined, secret: string): string | null {
  if (!ip) return null;
  const key = `${secret}\u0000${ip}`;
  let hash = ipHashes.get(key);
  if (!hash) {
    // Remembered per process (a busy checker asks many times); the map is emptied when it grows large.
    if (ipHashes.size >= 10_000) ipHashes.clear();
    hash = crypto.createHmac('sha256', secret).update(ip).digest('hex').slice(0, 32);
    ipHashes.set(key, hash);
  }
  return hash;
}

// PostgreSQL text cannot hold NUL characters: they are dropped from what is logged as typed.
const clip = (text: string) => text.replaceAll('\0', '').slice(0, 64);

type VerifyColumns = Pick<CertificateRow, 'id' | 'number' | 'status' | 'holder_name' | 'area_name' | 'issued_on' | 'expires_on' | 'revoked_reason' | 'revoked_at'>;
const VERIFY_COLUMNS = ['id', 'number', 'status', 'holder_name', 'area_name', 'issued_on', 'expires_on', 'revoked_reason', 'revoked_at'];

function answerFor(number: string, row: VerifyColumns | undefined, today: string): VerificationAnswer {
  if (!row) return { number, status: 'not-found', holderName: null, area: null, issuedOn: null, expiresOn: null };
  const status = effectiveStatus(row, today);
  return {
    number: row.number,
    status,
    holderName: row.holder_name,
    area: row.area_name,
    issuedOn: row.issued_on,
    expiresOn: row.expires_on,
    ...(status === 'revoked' ? { revokedReason: row.revoked_reason ?? 'No reason recorded.', revokedOn: row.revoked_at!.toISOString().slice(0, 10) } : {}),
  };
}

interface LogEntry {
  kind: LookupKind;
  number_tried: string;
  result: LookupResult;
  certificate_id: string | null;
  user_id: string | null;
  batch_id?: string | null;
  ip_hash: string | null;
}

/**
 * One statement whatever the number of entries: the rows travel as one JSON parameter, so a 5,000-row
 * batch stays far inside PostgreSQL's parameter limit and the statement text never changes (no per-row
 * SQL building on busy public lookups).
 */
async function writeLog(db: Knex | Knex.Transaction, entries: LogEntry[]) {
  if (!entries.length) return;
  await db.raw(
    `insert into verification_log (kind, number_tried, result, certificate_id, user_id, batch_id, ip_hash)
     select kind, number_tried, result, certificate_id, user_id, batch_id, ip_hash
       from jsonb_to_recordset(?::jsonb) as e(kind text, number_tried text, result text, certificate_id uuid, user_id uuid, batch_id uuid, ip_hash text)`,
    [JSON.stringify(entries)],
  );
}

/**
 * Single lookups, logged by group commit: each request waits until its own entry is written (nothing
 * is answered unlogged, and a crash loses nothing answered), while the entries of requests that
 * arrive during one insert share the next. At low traffic this is one insert per lookup, as before.
 */
const logQueues = new WeakMap<Knex, { waiting: { entry: LogEntry; done: (error?: unknown) => void }[]; writing: boolean }>();

function logLookup(knex: Knex, entry: LogEntry): Promise<void> {
  let queue = logQueues.get(knex);
  if (!queue) logQueues.set(knex, (queue = { waiting: [], writing: false }));
  const q = queue;
  return new Promise<void>((resolve, reject) => {
    q.waiting.push({ entry, done: (error) => (error ? reject(error) : resolve()) });
    if (q.writing) return;
    q.writing = true;
    void (async () => {
      while (q.waiting.length) {
        const group = q.waiting.splice(0, 1_000);
        try {
          await writeLog(knex, group.map((w) => w.entry));
          for (const w of group) w.done();
        } catch (error) {
          for (const w of group) w.done(error);
        }
      }
      q.writing = false;
    })();
  });
}

/** One number, as typed. Malformed input is logged and then refused with the typo hint (400). */
export async function verifyNumber(knex: Knex, input: string, caller: LookupCaller, cache?: ReadCache): Promise<VerificationAnswer> {
  const parsed = parseCertificateNumber(input);
  if (!parsed.ok) {
    await logLookup(knex, { kind: 'single', number_tried: clip(input), result: 'malformed', certificate_id: null, user_id: caller.userId ?? null, ip_hash: caller.ipHash ?? null });
    throw new HttpError(400, parsed.reason === 'check' ? 'number_check_failed' : 'invalid_number', `The certificate number ${parsed.message}.`, [
      { field: 'number', message: `number: ${parsed.message}` },
    ]);
  }
  const load = () => knex('certificates').where({ number: parsed.number }).first<VerifyColumns | undefined>(VERIFY_COLUMNS);
  const row = cache ? await cache.certificate(parsed.number, load) : await load();
  const answer = answerFor(parsed.number, row, todayUtc());
  await logLookup(knex, { kind: 'single', number_tried: clip(input), result: answer.status, certificate_id: row?.id ?? null, user_id: caller.userId ?? null, ip_hash: caller.ipHash ?? null });
  return answer;
}

// Files ---------------------------------------------------------------------------------------

/** Authentic only when the bytes are exactly those issued: one changed byte and the SHA-256 differs. */
export async function checkFile(knex: Knex, bytes: Buffer, caller: LookupCaller): Promise<{ authentic: boolean; sha256: string; number?: string; certificate?: VerificationAnswer }> {
  if (bytes.length < 5 || bytes.subarray(0, 5).toString('latin1') !== '%PDF-') {
    throw new HttpError(400, 'not_a_pdf', 'The file is not a PDF: it does not start the way every PDF does. Upload the certificate PDF as it was downloaded.', [
      { field: 'file', message: 'file: is not a PDF (its first bytes are not %PDF-)' },
    ]);
  }
  const sha256 = crypto.createHash('sha256').update(bytes).digest('hex');
  const row = await knex('certificates').where({ pdf_sha256: sha256 }).first<VerifyColumns | undefined>(VERIFY_COLUMNS);
  await writeLog(knex, [{ kind: 'file', number_tried: sha256, result: row ? 'authentic' : 'not-authentic', certificate_id: row?.id ?? null, user_id: caller.userId ?? null, ip_hash: caller.ipHash ?? null }]);
  if (!row) return { authentic: false, sha256 };
  return { authentic: true, sha256, number: row.number, certificate: answerFor(row.number, row, todayUtc()) };
}

// Batches -------------------------------------------------------------------------------------

const HEADER_CELL = /^(certificate)?\s*(number|no\.?|#|id)$|^certificate$/i;
const fileProblem = (message: string, status = 400, code = 'invalid_file') => new HttpError(status, code, `The file ${message}.`, [{ field: 'file', message: `file: ${message}` }]);

/** Reads the CSV: one number per row, in a column headed "number" or else the first column. */
function readNumbers(bytes: Buffer): { row: number; input: string }[] {
  if (bytes.includes(0)) throw fileProblem('is not a CSV text file (it contains binary data); export the list as CSV and try again');
  let records: { record: string[]; info: { lines: number } }[];
  try {
    records = parse(bytes, { bom: true, info: true, relax_column_count: true, skip_empty_lines: true, trim: true }) as unknown as typeof records;
  } catch (error) {
    const e = error as { message?: string; lines?: number };
    throw fileProblem(`could not be read as CSV${e.lines ? ` at line ${e.lines}` : ''}: ${String(e.message ?? 'unknown problem').replace(/^Invalid .*?:\s*/, '')}`);
  }
  if (!records.length) throw fileProblem('has no rows; put one certificate number per row, under a header "number" or in the first column');
  let column = 0;
  const first = records[0].record;
  const headerIndex = first.findIndex((cell) => HEADER_CELL.test(cell));
  const firstIsHeader = headerIndex >= 0 && !first.some((cell) => parseCertificateNumber(cell).ok);
  if (firstIsHeader) column = headerIndex;
  const data = firstIsHeader ? records.slice(1) : records;
  if (!data.length) throw fileProblem('has a header but no certificate numbers under it');
  if (data.length > BATCH_MAX_ROWS) throw fileProblem(`has ${data.length.toLocaleString('en-US')} rows; a batch takes at most ${BATCH_MAX_ROWS.toLocaleString('en-US')}, so split it into several files`);
  return data.map(({ record, info }) => ({ row: info.lines, input: (record[column] ?? '').slice(0, 200) }));
}

/** Checks every row it can; a bad row is reported with its line and never stops the others. */
export async function runBatch(knex: Knex, bytes: Buffer, fileName: string | null, caller: LookupCaller & { userId: string }): Promise<BatchAnswer> {
  const lines = readNumbers(bytes);
  const parsed = lines.map((line) => ({ ...line, parsed: line.input ? parseCertificateNumber(line.input) : null }));
  const wanted = [...new Set(parsed.flatMap((p) => (p.parsed?.ok ? [p.parsed.number] : [])))];
  const found = new Map<string, VerifyColumns>();
  for (let i = 0; i < wanted.length; i += 1_000) {
    const rows = await knex('certificates').whereIn('number', wanted.slice(i, i + 1_000)).select<VerifyColumns[]>(VERIFY_COLUMNS);
    for (const row of rows) found.set(row.number, row);
  }
  const today = todayUtc();
  const summary: BatchSummary = { rows: lines.length, checked: 0, invalid: 0, valid: 0, expired: 0, revoked: 0, superseded: 0, notFound: 0 };
  const logEntries: Omit<LogEntry, 'batch_id'>[] = [];
  const rows: BatchRow[] = parsed.map(({ row, input, parsed: p }) => {
    if (!p || !p.ok) {
      summary.invalid++;
      logEntries.push({ kind: 'batch', number_tried: clip(input), result: 'malformed', certificate_id: null, user_id: caller.userId, ip_hash: caller.ipHash ?? null });
      return { row, input, error: p ? `Row ${row}: the number ${p.message}` : `Row ${row}: the number column is empty` };
    }
    const certificate = found.get(p.number);
    const answer = answerFor(p.number, certificate, today);
    summary.checked++;
    if (answer.status === 'not-found') summary.notFound++;
    else summary[answer.status]++;
    logEntries.push({ kind: 'batch', number_tried: clip(input), result: answer.status, certificate_id: certificate?.id ?? null, user_id: caller.userId, ip_hash: caller.ipHash ?? null });
    const { number, status, holderName, area, issuedOn, expiresOn, revokedReason } = answer;
    return { row, input, number, status, holderName, area, issuedOn, expiresOn, ...(revokedReason ? { revokedReason } : {}) };
  });

  return knex.transaction(async (trx) => {
    const [batch] = await trx('verification_batches')
      .insert({ user_id: caller.userId, file_name: fileName?.slice(0, 200) ?? null, row_count: rows.length, results: JSON.stringify({ summary, rows }) })
      .returning<{ id: string; created_at: Date }[]>(['id', 'created_at']);
    await writeLog(trx, logEntries.map((entry) => ({ ...entry, batch_id: batch.id })));
    return { batchId: batch.id, fileName: fileName?.slice(0, 200) ?? null, createdAt: batch.created_at.toISOString(), summary, rows };
  });
}

/** A spreadsheet must never run what someone typed into a cell: formula-like text is quoted. */
const safeCell = (value: unknown) => {
  const text = value === null || value === undefined ? '' : String(value);
  return /^[=+\-@\t\r]/.test(text) ? `'${text}` : text;
};

/** The stored results of one of the auditor's own batches, as CSV; another person's batch is a 404. */
export async function batchCsv(knex: Knex, batchId: string, userId: string): Promise<{ csv: string; fileName: string }> {
  const batch = await knex('verification_batches').where({ id: batchId, user_id: userId }).first<{ results: { rows: BatchRow[] }; created_at: Date } | undefined>('results', 'created_at');
  if (!batch) throw notFound('Batch');
  const csv = stringify(
    batch.results.rows.map((r) => [r.row, r.input, r.number, r.status ?? 'invalid', r.holderName, r.area, r.issuedOn, r.expiresOn, r.revokedReason, r.error].map(safeCell)),
    { header: true, columns: ['row', 'input', 'number', 'status', 'holder_name', 'area', 'issued_on', 'expires_on', 'revoked_reason', 'problem'] },
  );
  return { csv, fileName: `plumewright-batch-check-${batch.created_at.toISOString().slice(0, 10)}.csv` };
}

// The auditor's own log ------------------------------------------------------------------------

export async function listLookups(knex: Knex, userId: string, opts: { page: number; pageSize: number; kind?: LookupKind }) {
  const query = knex('verification_log as l').leftJoin('certificates as c', 'c.id', 'l.certificate_id').where('l.user_id', userId);
  if (opts.kind) query.where('l.kind', opts.kind);
  const [{ count }] = await query.clone().count<{ count: number }[]>('* as count');
  const rows = await query
    .orderBy([{ column: 'l.at', order: 'desc' }, { column: 'l.id', order: 'desc' }])
    .limit(opts.pageSize)
    .offset((opts.page - 1) * opts.pageSize)
    .select('l.at', 'l.kind', 'l.number_tried', 'l.result', 'l.batch_id', 'c.number');
  const lookups: LookupEntry[] = rows.map((r) => ({ at: (r.at as Date).toISOString(), kind: r.kind, input: r.number_tried, result: r.result, number: r.number ?? null, batchId: r.batch_id ?? null }));
  return { lookups, total: Number(count), page: opts.page, pageSize: opts.pageSize };
}
