import type { Page } from 'playwright-core';
import { fullShot, newPage, pageErrors, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

/**
 * The best-expected envelope as a user builds it: inputs picked from what the group may use, a
 * refusal shown beside the input it names, the stored draft listing its inputs with links, and
 * "rebuild from the latest inputs" once an input has a newer published version.
 */

jest.setTimeout(240_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E();
});
afterAll(async () => e?.close());

/** An invented falling limit curve a·e^(−m/s) with ±1σ/±2σ bands, in TeV and fb (or on μ). */
function resultBody(title: string, a: number, s: number, quantity: 'xsec' | 'mu' = 'xsec') {
  const x = [1, 1.5, 2, 2.5, 3, 3.5, 4];
  const exp = x.map((m) => a * Math.exp(-m / s));
  return {
    meta: { title, model: 'Fictional heavy scalar', parameterName: 'm(S)', parameterUnit: 'TeV', quantity, quantityUnit: quantity === 'mu' ? '' : 'fb', sqrtS: 18, luminosity: 96.5, method: 'asymptotic', reference: 'LFN 31.20' },
    curve: { x, observed: exp.map((v) => v * 1.1), expected: { '-2': exp.map((v) => v * 0.55), '-1': exp.map((v) => v * 0.75), '0': exp, '1': exp.map((v) => v * 1.4), '2': exp.map((v) => v * 1.9) } },
  };
}

async function fromPage(page: Page, method: string, url: string, body: unknown = {}): Promise<[number, Record<string, unknown>]> {
  const u = JSON.stringify(url);
  const b = JSON.stringify(JSON.stringify(body));
  const m = JSON.stringify(method);
  return (await page.evaluate(`fetch(${u}, { method: ${m}, headers: { 'Content-Type': 'application/json' }, body: ${b} }).then((r) => r.json().then((j) => [r.status, j]))`)) as [number, Record<string, unknown>];
}

async function pick(page: Page, title: string) {
  await page.getByLabel('Find results to use as inputs').fill(title);
  await page.getByRole('button', { name: `Add ${title} v1 as an input`, exact: true }).click();
  await page.getByRole('group', { name: new RegExp(`^Input \\d+: ${title}`) }).waitFor();
}

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  test('build an envelope, see a refusal beside its input, open the draft with its inputs, rebuild after a newer input', async () => {
    const { page, context } = await newPage(e, vp);
    await signUpInBrowser(page, 'Wren Combiner', `envelope-${vp}-${Date.now().toString(36)}@lab.example`);
    await page.getByRole('button', { name: 'Create a group', exact: true }).click();
    await page.getByLabel('Group name').fill(`Fictional Combination Board ${vp}`);
    await page.getByRole('button', { name: 'Create group', exact: true }).click();
    await page.getByRole('heading', { name: 'Members', exact: true }).waitFor();
    const groupId = (await page.evaluate(`fetch('/api/groups').then((r) => r.json()).then((b) => b.groups[0].id)`)) as string;
    const made: Record<string, string> = {};
    for (const [title, a, s, q] of [
      [`Scalar to photons ${vp}`, 40, 1.5, 'xsec'],
      [`Scalar to jets ${vp}`, 80, 1.0, 'xsec'],
      [`Scalar signal strength ${vp}`, 2, 1.5, 'mu'],
    ] as const) {
      const [status, body] = await fromPage(page, 'POST', `/api/groups/${groupId}/results`, resultBody(title, a, s, q));
      expect(status).toBe(201);
      made[title] = body.resultId as string;
    }

    await page.goto('/');
    await page.getByRole('button', { name: 'Best-expected envelope', exact: true }).click();
    await page.getByRole('heading', { name: 'Best-expected envelope', exact: true }).waitFor();
    const build = page.getByRole('button', { name: 'Build the envelope', exact: true });
    expect(await build.isDisabled()).toBe(true);

    // A limit on μ cannot join limits on σ×B: the check refuses it before anything is stored, beside that input.
    await pick(page, `Scalar to photons ${vp}`);
    await pick(page, `Scalar signal strength ${vp}`);
    const bad = page.getByRole('group', { name: new RegExp(`^Input 2: Scalar signal strength ${vp}`) });
    await page.getByText('Some inputs cannot be combined: see the messages beside them.', { exact: true }).waitFor();
    expect(await bad.innerText()).toMatch(/μ|mu|quantit/i);
    await fullShot(page, vp, 'envelope-refused');
    await page.getByRole('button', { name: 'Remove input 2', exact: true }).click();

    expect(await build.isDisabled()).toBe(true);
    await pick(page, `Scalar to jets ${vp}`);
    // The preview: the curve and which input it takes where (photons below the crossing, jets above).
    const where = page.getByRole('list', { name: 'Which input the envelope takes where' });
    await where.waitFor();
    const stretches = await where.getByRole('listitem').allInnerTexts();
    expect(stretches).toHaveLength(2);
    expect(stretches[0]).toMatch(new RegExp(`^1–2\\.079 TeV: Scalar to photons ${vp} v1$`));
    expect(stretches[1]).toMatch(new RegExp(`^2\\.079–4 TeV: Scalar to jets ${vp} v1$`));
    await fullShot(page, vp, 'envelope-preview');
    await page.getByLabel('Title of the envelope').fill(`Scalar envelope ${vp}`);
    await build.click();
    await page.getByRole('heading', { name: `Scalar envelope ${vp}`, exact: true }).waitFor();
    const inputs = page.getByRole('list', { name: 'Inputs of this envelope' });
    await inputs.waitFor();
    expect(await inputs.getByRole('link').allInnerTexts()).toEqual([`1. Scalar to photons ${vp} v1`, `2. Scalar to jets ${vp} v1`]);
    expect(await page.getByRole('button', { name: 'Rebuild from the latest inputs' }).count()).toBe(0);
    await fullShot(page, vp, 'envelope-draft');

    // A newer published version of an input: the page says so and offers the rebuild.
    const photons = made[`Scalar to photons ${vp}`]!;
    const [v2] = await fromPage(page, 'POST', `/api/groups/${groupId}/results/${photons}/versions`, { ...resultBody(`Scalar to photons ${vp}`, 30, 1.5), changeNote: 'More data' });
    expect(v2).toBe(201);
    expect((await fromPage(page, 'POST', `/api/groups/${groupId}/results/${photons}/versions/2/publish`, { public: false }))[0]).toBe(200);
    await page.reload();
    await inputs.waitFor();
    await page.getByText('Version 2 is published', { exact: true }).waitFor();
    await page.getByRole('button', { name: 'Rebuild from the latest inputs', exact: true }).click();
    await inputs.getByRole('link', { name: `1. Scalar to photons ${vp} v2`, exact: true }).waitFor();
    expect(await page.getByRole('button', { name: 'Rebuild from the latest inputs' }).count()).toBe(0);
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });
});
