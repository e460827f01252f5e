import { listMailTo } from '@/db/queries/mail';
import { startTestApp, type TestApp } from '../helpers/app';
import { makeGroupWithRoles, makeResult, makeVersion, publishVersion, type Crew } from '../helpers/factories';

/**
 * Mail about review (the development outbox): curators and owners hear of a draft left by a
 * member who may not publish; the author hears when a curator publishes or retracts their version.
 */

let t: TestApp;
let crew: Crew;
let groupId: string;

beforeAll(async () => {
  t = await startTestApp();
  ({ groupId, crew } = await makeGroupWithRoles(t));
});
afterAll(async () => t?.close());

const mails = async (email: string, kind: string) => (await listMailTo(t.ctx.db, email)).filter((m) => m.kind === kind);

test('an analyst\'s draft is announced to the curator and the owner (not to the analyst, editor or viewer), with a link to the draft', async () => {
  const v = await makeResult(crew.analyst, groupId, { meta: { title: 'Osprey search <b>bold</b> & more' } });
  for (const who of [crew.curator, crew.owner]) {
    const got = await mails(who.email, 'review-request');
    const m = got.find((x) => x.subject.includes('Osprey search'));
    expect(m).toBeDefined();
    expect(m!.subject).toBe('A draft awaits review: “Osprey search <b>bold</b> & more” v1');
    expect(m!.text).toContain(`/groups/${groupId}/results/${v.resultId}?v=1`);
    // User text is escaped in the HTML part.
    expect(m!.html).toContain('Osprey search &lt;b&gt;bold&lt;/b&gt; &amp; more');
    expect(m!.html).not.toContain('<b>bold</b>');
  }
  for (const who of [crew.analyst, crew.editor, crew.viewer]) expect(await mails(who.email, 'review-request')).toHaveLength(0);

  // A new version by the analyst asks again.
  await makeVersion(crew.analyst, groupId, v.resultId, 'Finer grid', { title: 'Osprey search <b>bold</b> & more' });
  expect((await mails(crew.curator.email, 'review-request')).filter((m) => m.subject.endsWith('v2'))).toHaveLength(1);
});

test('a curator\'s own draft asks nobody', async () => {
  const before = (await mails(crew.owner.email, 'review-request')).length;
  await makeResult(crew.curator, groupId, { meta: { title: 'Curator draft' } });
  expect(await mails(crew.owner.email, 'review-request')).toHaveLength(before);
});

test('the author hears of publication and retraction (with the reason); a curator publishing their own version gets no mail', async () => {
  const v = await makeResult(crew.analyst, groupId, { meta: { title: 'Heron dimuon search' } });
  await publishVersion(crew.curator, groupId, v.resultId, 1, true);
  const published = (await mails(crew.analyst.email, 'version-published')).filter((m) => m.subject.includes('Heron'));
  expect(published).toHaveLength(1);
  expect(published[0]!.subject).toBe('Published: “Heron dimuon search” v1');
  expect(published[0]!.text).toMatch(/published and public/);

  const res = await crew.curator.agent.post(`/api/groups/${groupId}/results/${v.resultId}/versions/1/retract`).send({ reason: 'Wrong luminosity block' });
  expect(res.status).toBe(200);
  const retracted = (await mails(crew.analyst.email, 'version-retracted')).filter((m) => m.subject.includes('Heron'));
  expect(retracted).toHaveLength(1);
  expect(retracted[0]!.text).toContain('Reason given: Wrong luminosity block');

  const own = await makeResult(crew.curator, groupId, { meta: { title: 'Curator own search' } });
  await publishVersion(crew.curator, groupId, own.resultId, 1, false);
  expect((await mails(crew.curator.email, 'version-published')).filter((m) => m.subject.includes('Curator own'))).toHaveLength(0);
});

test('a refused publication sends nothing', async () => {
  const v = await makeResult(crew.analyst, groupId, { meta: { title: 'Plover twice' } });
  await publishVersion(crew.curator, groupId, v.resultId, 1);
  const again = await crew.curator.agent.post(`/api/groups/${groupId}/results/${v.resultId}/versions/1/publish`).send({});
  expect(again.status).toBe(409);
  expect((await mails(crew.analyst.email, 'version-published')).filter((m) => m.subject.includes('Plover twice'))).toHaveLength(1);
});
