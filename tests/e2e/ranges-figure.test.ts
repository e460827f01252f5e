import type { Page } from 'playwright-core';
import { apiFromPage, fullShot, newPage, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(240_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E();
});
afterAll(async () => e?.close());

/** An invented falling limit (a theory curve only when asked). */
function resultBody(title: string, scale: number, withTheory: boolean) {
  const x = [1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5, 5];
  const exp = x.map((m) => scale * 20 * Math.exp(-1.1 * m));
  return {
    meta: { title, model: 'Fictional heavy vector', parameterName: "$m_{V'}$", parameterUnit: 'TeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'asymptotic' },
    curve: { x, observed: exp.map((v, i) => v * (1 + 0.15 * Math.sin(i))), expected: { '0': exp } },
    ...(withTheory ? { theory: { x, central: x.map((m) => 400 * Math.exp(-1.6 * m)) } } : {}),
  };
}

async function makeGroup(page: Page, name: string): Promise<string> {
  await page.getByRole('button', { name: 'Create a group', exact: true }).click();
  await page.getByLabel('Group name').fill(name);
  await page.getByRole('button', { name: 'Create group', exact: true }).click();
  await page.getByRole('heading', { name: 'Members', exact: true }).waitFor();
  return (await page.evaluate(`fetch('/api/groups').then((r) => r.json()).then((b) => b.groups[0].id)`)) as string;
}

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  const tag = `${vp}-${Date.now().toString(36)}`;

  test('compose a summary of excluded ranges: choose the kind, add bars, a note, save, export CSV', async () => {
    const { page, context } = await newPage(e, vp);
    await signUpInBrowser(page, 'Ivo Summary', `ranges-${tag}@lab.example`);
    const groupId = await makeGroup(page, `Fictional Summary Team ${vp}`);
    const titles = [`Dijet summary ${vp}`, `Photon summary ${vp}`];
    for (const [i, title] of titles.entries()) {
      await apiFromPage(page, 'POST', `/api/groups/${groupId}/results`, resultBody(title, 1 - 0.4 * i, i === 0));
    }

    await page.goto('/figures');
    await page.getByRole('button', { name: 'New figure', exact: true }).click();
    await page.getByRole('heading', { name: 'New figure', exact: true }).waitFor();
    for (const title of titles) {
      await page.getByLabel('Find results to add').fill(title);
      await page.getByRole('button', { name: `Add ${title} as a layer`, exact: true }).click();
      await page.getByRole('group', { name: new RegExp(`^Layer \\d: ${title}$`) }).waitFor();
    }
    const unfold = page.getByRole('button', { name: 'Look and labels: unfold', exact: true });
    if (await unfold.count()) await unfold.click();
    await page.getByLabel('Figure name').fill(`Summary ${vp}`);
    await page.getByRole('radio', { name: 'Summary of excluded ranges', exact: true }).click();
    // The controls follow the kind: bar options in, bands and the vertical axis out.
    await page.getByRole('checkbox', { name: 'Group the bars by model', exact: true }).waitFor();
    expect(await page.getByRole('checkbox', { name: 'Layer 1 carries the ±1σ/±2σ bands', exact: true }).count()).toBe(0);
    expect(await page.getByLabel('Vertical axis title', { exact: true }).count()).toBe(0);
    await page.getByText('No theory curve is stored with this result: its bar says “no theory curve, no range”.', { exact: true }).waitFor();
    await page.getByLabel('Note beside the bar of layer 1', { exact: true }).fill('2031 data');
    await page.getByRole('button', { name: 'Order of the bars: As listed', exact: true }).click();
    await page.getByRole('radio', { name: 'By title (A–Z)', exact: true }).click();
    const preview = page.getByRole('img', { name: /^Preview of the figure “Summary .*” with 2 layer\(s\)$/ });
    await preview.waitFor();
    await preview.locator('svg path').nth(40).waitFor({ state: 'attached' });
    await fullShot(page, vp, 'composer-ranges');

    await page.getByRole('button', { name: 'Save the new figure', exact: true }).click();
    await page.getByText(/^Version 1 · group only$/).waitFor();
    const figureId = /figures\/([0-9a-f-]{36})/.exec(page.url())![1]!;
    const spec = (await page.evaluate(`fetch('/api/groups/${groupId}/figures/${figureId}').then((r) => r.json()).then((b) => b.latest.spec)`)) as { kind: string; ranges: { sort: string }; layers: { note: string }[] };
    expect(spec.kind).toBe('ranges');
    expect(spec.ranges.sort).toBe('title');
    expect(spec.layers[0]!.note).toBe('2031 data');
    const csv = await context.request.get(`${e.base}/api/figures/${figureId}/export.csv`);
    const text = await csv.text();
    expect(text.split('\r\n')[0]).toBe('analysis,model,range,from,to,open_low,open_high,x_unit,note');
    expect(text).toContain(`Photon summary ${vp},Fictional heavy vector,no theory curve,`);
    expect(text).toContain(`Dijet summary ${vp},Fictional heavy vector,observed,`);
    await context.close();
  });
});
