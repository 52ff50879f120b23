import crypto from 'node:crypto';
import zlib from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TestAgent, signedIn } from '../helpers/agent';
import { createCompany, createUser, uniqueEmail } from '../helpers/factory';
import { eventually, payCheckout, startBillingStack, type BillingStack } from '../helpers/billing';
import { linkIn, waitForMail, type CaughtMail } from '../helpers/mail';
import { hasSeat } from '../../server/services/seats';
import { sha256 } from '../../server/services/invitations';

let stack: BillingStack;
const knex = () => stack.server.knex;
const app = () => stack.server.app;

beforeAll(async () => {
  stack = await startBillingStack();
});
afterAll(async () => {
  await stack?.close();
});

/** A company that has paid for `seats` through the payment page, with its admin signed in. */
async function paidCompany(seats: number) {
  const admin = new TestAgent(app());
  const adminEmail = uniqueEmail('admin');
  const res = await admin.post('/api/signup', {
    companyName: `Corvid Ridge Testing ${crypto.randomBytes(2).toString('hex')}`,
    adminName: 'Bettany Okafor-Lund',
    email: adminEmail,
    password: 'an-admin-password-1',
    seats,
    interval: 'month',
  });
  expect(res.status).toBe(201);
  await admin.csrfToken(true);
  await payCheckout(res.body.checkoutUrl);
  await stack.drain();
  const billing = await eventually(async () => (await admin.get('/api/billing')).body, (b) => b.subscription?.status === 'active');
  expect(billing.seats.total).toBe(seats);
  return { admin, adminEmail, companyId: res.body.me.activeCompanyId as string };
}

/** An invitation row with a token the test knows (as if its e-mail had been read). */
async function invitationWithToken(companyId: string, overrides: Record<string, unknown> = {}) {
  const token = crypto.randomBytes(32).toString('base64url');
  const email = uniqueEmail('invitee');
  const [row] = await knex()('invitations')
    .insert({ company_id: companyId, email, name: 'Pell Aranda', roles: ['crew'], token_hash: sha256(token), expires_at: new Date(Date.now() + 86_400_000), sent_at: new Date(), ...overrides })
    .returning('*');
  return { token, email, id: row.id as string };
}

async function accept(token: string, body: Record<string, unknown> = { password: 'a-crew-password-1' }) {
  const agent = new TestAgent(app());
  const res = await agent.post('/api/invitations/accept', { token, ...body });
  return { agent, res };
}

const seatsOf = async (companyId: string) =>
  Object.fromEntries(
    (await knex()('memberships').where({ company_id: companyId }).groupBy('seat_status').select('seat_status', knex().raw('count(*)::int as n'))).map((r: { seat_status: string; n: number }) => [r.seat_status, r.n]),
  );

describe('inviting one person', () => {
  it('e-mails a single-use link (only its hash is stored), and accepting signs in with a seat', async () => {
    const { admin, companyId } = await paidCompany(3);
    const email = uniqueEmail('newcrew');
    const created = await admin.post('/api/company/invitations', { name: 'Odalys Penhallow', email: email.toUpperCase(), roles: ['crew'], crew: 'North crew' });
    expect(created.status).toBe(201);
    expect(created.body.invitation).toMatchObject({ email, name: 'Odalys Penhallow', roles: ['crew'], crew: 'North crew', state: 'pending' });

    const mail = await waitForMail(email, { subject: /invited you/ });
    const link = linkIn(mail, /http:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/);
    expect(link.startsWith(`${stack.server.url}/invitations/`)).toBe(true);
    const token = link.split('/').pop()!;
    const row = await knex()('invitations').where({ id: created.body.invitation.id }).first();
    expect(row.token_hash).toBe(sha256(token));
    expect(JSON.stringify(row)).not.toContain(token);

    const lookup = await new TestAgent(app()).post('/api/invitations/lookup', { token });
    expect(lookup.status).toBe(200);
    expect(lookup.body).toMatchObject({ email, name: 'Odalys Penhallow', roles: ['crew'], hasAccount: false });

    const short = await accept(token, { name: 'Odalys Penhallow', password: 'short' });
    expect(short.res.status).toBe(400);
    expect(short.res.body.error.fields[0].field).toBe('password');

    const { agent, res } = await accept(token, { name: 'Odalys P. Penhallow', password: 'a-crew-password-1' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ companyId, seat: 'assigned', queuePosition: null });
    expect(res.body.me.user).toMatchObject({ email, name: 'Odalys P. Penhallow' });
    await agent.csrfToken(true);
    const mine = await agent.get('/api/company/my-seat').expect(200);
    expect(mine.body).toMatchObject({ seat: 'assigned', usable: true });
    expect(await hasSeat(knex(), res.body.me.user.id, companyId)).toBe(true);
    expect((await knex()('memberships').where({ user_id: res.body.me.user.id }).first()).crew).toBe('North crew');

    const again = await accept(token, { password: 'another-password-1' });
    expect(again.res.status).toBe(410);
    expect(again.res.body.error.code).toBe('invitation_used');
    expect(again.res.body.error.message).toMatch(/ask your company admin to resend/i);
    expect((await new TestAgent(app()).post('/api/invitations/lookup', { token })).status).toBe(410);
  });

  it('names each bad field, and refuses people already in or already invited', async () => {
    const { admin, adminEmail } = await paidCompany(1);
    const bad = await admin.post('/api/company/invitations', { name: '', email: 'not-mail', roles: ['auditor'], crew: 'x'.repeat(81) });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.map((f: { field: string }) => f.field).sort()).toEqual(['crew', 'email', 'name', 'roles.0']);
    const none = await admin.post('/api/company/invitations', { name: 'Sol Ivers', email: uniqueEmail(), roles: [] });
    expect(none.body.error.fields[0]).toEqual({ field: 'roles', message: 'roles: must name at least one role' });

    expect((await admin.post('/api/company/invitations', { name: 'Me Again', email: adminEmail, roles: ['crew'] })).body.error.code).toBe('already_member');
    const email = uniqueEmail();
    expect((await admin.post('/api/company/invitations', { name: 'Tamar Welk', email, roles: ['crew'] })).status).toBe(201);
    const twice = await admin.post('/api/company/invitations', { name: 'Tamar Welk', email, roles: ['crew'] });
    expect(twice.status).toBe(409);
    expect(twice.body.error.code).toBe('already_invited');
  });

  it('explains an expired link, and a resend replaces it with a fresh one', async () => {
    const { admin, companyId } = await paidCompany(2);
    const email = uniqueEmail('late');
    const created = await admin.post('/api/company/invitations', { name: 'Rune Asplund', email, roles: ['crew', 'manager'] });
    const oldToken = linkIn(await waitForMail(email), /\/invitations\/[A-Za-z0-9_-]+/).split('/').pop()!;
    await knex()('invitations').where({ id: created.body.invitation.id }).update({ expires_at: new Date(Date.now() - 60_000) });

    const expired = await accept(oldToken);
    expect(expired.res.status).toBe(410);
    expect(expired.res.body.error.code).toBe('invitation_expired');
    expect(expired.res.body.error.message).toMatch(/expired on .*Ask your company admin to resend the invitation/);
    const listed = await admin.get('/api/company/invitations?state=expired').expect(200);
    expect(listed.body.invitations.map((i: { email: string }) => i.email)).toContain(email);

    const resent = await admin.post(`/api/company/invitations/${created.body.invitation.id}/resend`);
    expect(resent.status).toBe(200);
    expect(resent.body.invitation.state).toBe('pending');
    const mails = await eventually(
      async () => (await (await fetch(`${process.env.MAIL_API_URL}/email?to.address=${encodeURIComponent(email)}`)).json()) as CaughtMail[],
      (list) => list.length >= 2,
    );
    const newToken = linkIn(mails.at(-1)!, /\/invitations\/[A-Za-z0-9_-]+/).split('/').pop()!;
    expect(newToken).not.toBe(oldToken);
    expect((await accept(oldToken)).res.body.error.code).toBe('invitation_unknown');
    const ok = await accept(newToken);
    expect(ok.res.status).toBe(200);
    expect(ok.res.body.seat).toBe('assigned');
    expect(await hasSeat(knex(), ok.res.body.me.user.id, companyId)).toBe(true);
  });

  it('refuses a withdrawn invitation and lets an existing account join with its own password', async () => {
    const { admin, companyId } = await paidCompany(2);
    const withdrawn = await invitationWithToken(companyId);
    expect((await admin.send('delete', `/api/company/invitations/${withdrawn.id}`)).status).toBe(204);
    const refused = await accept(withdrawn.token);
    expect(refused.res.status).toBe(410);
    expect(refused.res.body.error.code).toBe('invitation_revoked');

    const elsewhere = await createCompany(knex(), 'Sallowfen Analytics');
    const person = await createUser(knex(), { companyId: elsewhere.id, roles: ['crew'], name: 'Kit Marchbanks', password: 'kits-own-password-9' });
    const invite = await invitationWithToken(companyId, { email: person.email, name: 'K. Marchbanks' });
    const lookup = await new TestAgent(app()).post('/api/invitations/lookup', { token: invite.token });
    expect(lookup.body.hasAccount).toBe(true);
    const wrong = await accept(invite.token, { password: 'not-kits-password' });
    expect(wrong.res.status).toBe(400);
    expect(wrong.res.body.error.fields[0].field).toBe('password');
    const joined = await accept(invite.token, { password: 'kits-own-password-9' });
    expect(joined.res.status).toBe(200);
    expect(joined.res.body.me.user.name).toBe('Kit Marchbanks');
    expect(joined.res.body.me.memberships.map((m: { companyId: string }) => m.companyId).sort()).toEqual([companyId, elsewhere.id].sort());
  });
});

describe('seats at acceptance', () => {
  it('seats exactly 10 of 40 people accepting at once for 10 free seats; the rest queue in order', async () => {
    const { admin, companyId } = await paidCompany(10);
    const invitations = await Promise.all([...Array(40)].map(() => invitationWithToken(companyId)));
    const agents = invitations.map(() => new TestAgent(app()));
    await Promise.all(agents.map((a) => a.csrfToken()));

    const results = await Promise.all(invitations.map((inv, i) => agents[i].post('/api/invitations/accept', { token: inv.token, password: `crew-password-${i}-long` })));
    expect(results.map((r) => r.status)).toEqual(Array(40).fill(200));
    const assigned = results.filter((r) => r.body.seat === 'assigned');
    const queued = results.filter((r) => r.body.seat === 'queued');
    expect(assigned).toHaveLength(10);
    expect(queued).toHaveLength(30);
    expect(queued.map((r) => r.body.queuePosition).sort((a, b) => a - b)).toEqual([...Array(30)].map((_, i) => i + 1));
    expect(await seatsOf(companyId)).toEqual({ assigned: 10, queued: 30, none: 1 });

    const billing = await admin.get('/api/billing').expect(200);
    expect(billing.body.seats).toEqual({ total: 10, used: 10, queued: 30 });

    // Adding seats hands them to the front of the queue.
    const first = queued.find((r) => r.body.queuePosition === 1)!.body.me.user.id;
    const second = queued.find((r) => r.body.queuePosition === 2)!.body.me.user.id;
    const more = await admin.send('put', '/api/billing/seats', { seats: 11 });
    expect(more.body.seats).toEqual({ total: 11, used: 11, queued: 29 });
    expect(await hasSeat(knex(), first, companyId)).toBe(true);
    expect(await hasSeat(knex(), second, companyId)).toBe(false);
  });
});

describe('managing seats and members', () => {
  it('assigns, moves, unassigns and removes, never past the seats paid for', async () => {
    const { admin, companyId } = await paidCompany(2);
    const [a, b] = [await createUser(knex(), { companyId, roles: ['crew'], name: 'Aurelio Vance' }), await createUser(knex(), { companyId, roles: ['crew'], name: 'Bryony Stahl' })];
    const c = await createUser(knex(), { companyId, roles: ['crew'], name: 'Cosima Drury' });
    expect((await admin.post(`/api/company/members/${a.id}/seat`)).status).toBe(200);
    expect((await admin.post(`/api/company/members/${b.id}/seat`)).status).toBe(200);
    const full = await admin.post(`/api/company/members/${c.id}/seat`);
    expect(full.status).toBe(409);
    expect(full.body.error.message).toMatch(/^All 2 seats are in use/);

    const moved = await admin.post(`/api/company/members/${c.id}/seat`, { fromUserId: a.id });
    expect(moved.status).toBe(200);
    expect(moved.body.movedFrom).toEqual({ userId: a.id, name: 'Aurelio Vance' });
    expect(await hasSeat(knex(), c.id, companyId)).toBe(true);
    expect(await hasSeat(knex(), a.id, companyId)).toBe(false);

    // a waits in the queue; when b's seat is taken back, a gets it.
    await knex()('memberships').where({ user_id: a.id, company_id: companyId }).update({ seat_status: 'queued', queued_at: new Date() });
    const unassigned = await admin.send('delete', `/api/company/members/${b.id}/seat`);
    expect(unassigned.status).toBe(200);
    expect(unassigned.body.promoted).toEqual([{ userId: a.id, name: 'Aurelio Vance' }]);

    const list = await admin.get('/api/company/members?seat=assigned&sort=name').expect(200);
    expect(list.body.members.map((m: { name: string }) => m.name)).toEqual(['Aurelio Vance', 'Cosima Drury']);
    expect(list.body.total).toBe(2);
    const search = await admin.get('/api/company/members?q=bryony').expect(200);
    expect(search.body.members).toEqual([expect.objectContaining({ name: 'Bryony Stahl', seat: 'none', queuePosition: null })]);
    expect((await admin.get('/api/company/members?pageSize=1000&sort=shoe')).body.error.fields.map((f: { field: string }) => f.field).sort()).toEqual(['pageSize', 'sort']);

    // Removing a member keeps their account (and so their certificates); their seat goes on.
    await knex()('memberships').where({ user_id: b.id, company_id: companyId }).update({ seat_status: 'queued', queued_at: new Date() });
    const removed = await admin.send('delete', `/api/company/members/${c.id}`);
    expect(removed.status).toBe(200);
    expect(removed.body.promoted).toEqual([{ userId: b.id, name: 'Bryony Stahl' }]);
    expect(await knex()('users').where({ id: c.id }).first()).toBeTruthy();
    expect(await knex()('memberships').where({ user_id: c.id, company_id: companyId }).first()).toBeUndefined();
    const me = (await admin.get('/api/auth/me')).body.user.id;
    expect((await admin.send('delete', `/api/company/members/${me}`)).status).toBe(409);
    const audit = await knex()('audit_log').where({ company_id: companyId }).pluck('action');
    expect(audit).toEqual(expect.arrayContaining(['seat.assigned', 'seat.moved', 'seat.unassigned', 'seats.filled-from-queue', 'member.removed']));
  });
});

const csv = (lines: string[]) => Buffer.from(`${lines.join('\r\n')}\r\n`, 'utf8');

async function upload(agent: TestAgent, path: string, field: string, bytes: Buffer, fileName: string) {
  const token = await agent.csrfToken();
  return agent.agent.post(path).set('x-csrf-token', token).attach(field, bytes, fileName);
}

describe('roster upload', () => {
  it('offers a template that imports as it is', async () => {
    const { admin } = await paidCompany(1);
    const template = await admin.get('/api/company/roster/template').expect(200);
    expect(template.headers['content-type']).toMatch(/^text\/csv/);
    expect(template.headers['content-disposition']).toMatch(/attachment/);
    const preview = await upload(admin, '/api/company/roster/preview', 'roster', Buffer.from(template.text), 'template.csv');
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({ total: 3, toInvite: 3, withProblems: 0 });
  });

  it('lists every bad row by its number and imports nothing', async () => {
    const { admin, companyId } = await paidCompany(1);
    const file = csv([
      'Name,E-mail,Roles,Crew'.replace('E-mail', 'email'),
      'Hazel Quarrie,hazel.quarrie@corvid.example,crew,West',
      'Ivo Brennick,not-an-address,crew,West',
      'Jessamy Thorne,jessamy@corvid.example,crew; foreman,East',
      ',nameless@corvid.example,crew,East',
      'Hazel Again,HAZEL.QUARRIE@corvid.example,manager,',
      'Lorcan Pike,lorcan@corvid.example,,',
    ]);
    const preview = await upload(admin, '/api/company/roster/preview', 'roster', file, 'crew.csv');
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({ fileName: 'crew.csv', total: 6, toInvite: 2, withProblems: 4 });
    expect(preview.body.rows.map((r: { row: number; action: string }) => [r.row, r.action])).toEqual([[2, 'invite'], [3, 'fix'], [4, 'fix'], [5, 'fix'], [6, 'fix'], [7, 'invite']]);
    expect(preview.body.rows[5].roles).toEqual(['crew']);

    const before = await knex()('invitations').where({ company_id: companyId }).count<{ count: number }[]>('* as count');
    const res = await upload(admin, '/api/company/roster/import', 'roster', file, 'crew.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('roster_invalid');
    expect(res.body.error.message).toMatch(/^4 rows have problems \(3, 4, 5, 6\); nothing was imported/);
    expect(res.body.error.fields.map((f: { field: string }) => f.field)).toEqual(['rows.3.email', 'rows.4.roles', 'rows.5.name', 'rows.6.email']);
    expect(res.body.error.fields[1].message).toMatch(/^Row 4: roles has "foreman", which is not a role/);
    expect(res.body.error.fields[3].message).toMatch(/repeats row 2/);
    expect(await knex()('invitations').where({ company_id: companyId }).count<{ count: number }[]>('* as count')).toEqual(before);
    expect(await knex()('roster_imports').where({ company_id: companyId })).toHaveLength(0);
  });

  it('imports a good roster in one go, skips people already in, and reports the e-mails going out', async () => {
    const { admin, adminEmail, companyId } = await paidCompany(3);
    const people = [...Array(12)].map((_, i) => [`Roster Person ${i + 1}`, uniqueEmail(`roster${i + 1}`), i % 4 === 0 ? 'crew|manager' : 'crew', i < 6 ? 'West crew' : 'East crew']);
    const file = csv(['email,name,crew,roles', ...people.map(([name, email, roles, crew]) => `${email},${name},${crew},${roles}`), `${adminEmail},The Admin,,admin`]);
    const res = await upload(admin, '/api/company/roster/import', 'roster', file, 'spring.csv');
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ invited: 12, skipped: 1 });
    const progress = await eventually(async () => (await admin.get(`/api/company/roster/imports/${res.body.importId}`)).body, (p) => p.done, 30_000);
    expect(progress).toMatchObject({ total: 12, sent: 12, failed: 0, done: true });
    const mail = await waitForMail(people[4][1], { subject: /invited you/ });
    const token = linkIn(mail, /\/invitations\/[A-Za-z0-9_-]+/).split('/').pop()!;
    const joined = await accept(token);
    expect(joined.res.body.seat).toBe('assigned');
    expect((await knex()('memberships').where({ user_id: joined.res.body.me.user.id }).first()).roles).toEqual(['manager', 'crew']);
    expect(await knex()('audit_log').where({ company_id: companyId, action: 'roster.imported' })).toHaveLength(1);

    // Uploading the same file again invites nobody twice.
    const again = await upload(admin, '/api/company/roster/import', 'roster', file, 'spring.csv');
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('nothing_to_import');
  });

  it('refuses oversize, over-long and non-CSV files with 413 and 400', async () => {
    const { admin } = await paidCompany(1);
    const big = Buffer.alloc(1024 * 1024 + 10, 'a');
    const tooBig = await upload(admin, '/api/company/roster/preview', 'roster', big, 'big.csv');
    expect(tooBig.status).toBe(413);
    expect(tooBig.body.error.fields[0].field).toBe('roster');

    const many = csv(['name,email', ...[...Array(5001)].map((_, i) => `P${i},p${i}@x.example`)]);
    expect(many.length).toBeLessThan(1024 * 1024);
    const tooMany = await upload(admin, '/api/company/roster/preview', 'roster', many, 'many.csv');
    expect(tooMany.status).toBe(413);
    expect(tooMany.body.error.code).toBe('too_many_rows');

    const png = Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), Buffer.alloc(40)]);
    const image = await upload(admin, '/api/company/roster/preview', 'roster', png, 'roster.csv');
    expect(image.status).toBe(400);
    expect(image.body.error.code).toBe('invalid_roster');
    const workbook = await upload(admin, '/api/company/roster/preview', 'roster', Buffer.concat([Buffer.from('PK\x03\x04'), Buffer.alloc(30)]), 'roster.csv');
    expect(workbook.body.error.message).toMatch(/CSV UTF-8/);
    const headless = await upload(admin, '/api/company/roster/preview', 'roster', csv(['Hazel,hazel@x.example']), 'roster.csv');
    expect(headless.status).toBe(400);
    expect(headless.body.error.message).toMatch(/"name" and "email" are missing/);
    const wrongField = await upload(admin, '/api/company/roster/preview', 'file', csv(['name,email']), 'roster.csv');
    expect(wrongField.status).toBe(400);
    const nothing = await admin.post('/api/company/roster/preview', {});
    expect(nothing.status).toBe(400);
    expect(nothing.body.error.code).toBe('file_missing');
  });
});

/** A small valid PNG, made here so no image file is needed. */
function tinyPng(): Buffer {
  const chunk = (type: string, data: Buffer) => {
    const body = Buffer.concat([Buffer.from(type), data]);
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(zlib.crc32(body));
    return Buffer.concat([len, body, crc]);
  };
  const header = Buffer.alloc(13);
  header.writeUInt32BE(2, 0);
  header.writeUInt32BE(2, 4);
  header[8] = 8;
  header[9] = 2;
  const pixels = zlib.deflateSync(Buffer.from([0, 20, 90, 80, 20, 90, 80, 0, 20, 90, 80, 20, 90, 80]));
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', header), chunk('IDAT', pixels), chunk('IEND', Buffer.alloc(0))]);
}

describe('company logo', () => {
  it('takes a PNG or JPEG by its bytes, refuses other files and oversize ones, and serves it to members only', async () => {
    const { admin, companyId } = await paidCompany(1);
    const none = await admin.get(`/api/companies/${companyId}/logo`).expect(200);
    expect(none.headers['x-logo']).toBe('none');

    const png = tinyPng();
    const saved = await upload(admin, '/api/company/logo', 'logo', png, 'logo.png');
    expect(saved.status).toBe(200);
    expect(saved.body.logo).toMatchObject({ mime: 'image/png', size: png.length });
    const served = await admin.get(`/api/companies/${companyId}/logo`).buffer(true).expect(200);
    expect(served.headers['content-type']).toBe('image/png');
    expect(Buffer.compare(served.body as Buffer, png)).toBe(0);

    const jpeg = Buffer.concat([Buffer.from([0xff, 0xd8, 0xff, 0xe0]), Buffer.alloc(64, 1), Buffer.from([0xff, 0xd9])]);
    expect((await upload(admin, '/api/company/logo', 'logo', jpeg, 'logo.bin')).body.logo.mime).toBe('image/jpeg');

    const pretender = await upload(admin, '/api/company/logo', 'logo', Buffer.from('GIF89a not really'), 'logo.png');
    expect(pretender.status).toBe(400);
    expect(pretender.body.error).toMatchObject({ code: 'unsupported_image', fields: [{ field: 'logo', message: 'logo: is not a PNG or JPEG image' }] });
    const svg = await upload(admin, '/api/company/logo', 'logo', Buffer.from('<svg xmlns="http://www.w3.org/2000/svg"/>'), 'logo.jpg');
    expect(svg.status).toBe(400);
    const huge = await upload(admin, '/api/company/logo', 'logo', Buffer.concat([png, Buffer.alloc(1024 * 1024)]), 'logo.png');
    expect(huge.status).toBe(413);
    expect(huge.body.error.fields[0].field).toBe('logo');
    // The refused uploads left the JPEG in place.
    expect((await admin.get('/api/company/summary')).body.logo.mime).toBe('image/jpeg');

    const crew = await createUser(knex(), { companyId, roles: ['crew'] });
    expect((await (await signedIn(app(), crew.email, crew.password)).get(`/api/companies/${companyId}/logo`)).status).toBe(200);
    const other = await createCompany(knex());
    const outsider = await createUser(knex(), { companyId: other.id, roles: ['admin'] });
    expect((await (await signedIn(app(), outsider.email, outsider.password)).get(`/api/companies/${companyId}/logo`)).status).toBe(404);
  });
});
