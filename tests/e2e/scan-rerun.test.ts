import { apiFromPage, fullShot, newPage, pageErrors, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(240_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E({ jobs: true });
});
afterAll(async () => e?.close());

const ok = apiFromPage;

/** A small invented one-bin model per grid point. */
const model = (k: number) => ({ observed: [8 + k], signal: [3], backgrounds: [{ name: 'continuum', yields: [7.5 + k] }], systematics: [{ name: 'luminosity', effects: { signal: 0.03, continuum: 0.03 } }] });

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  test('a point of a finished pseudo-experiment scan is rerun with more pseudo-experiments: the field refuses too few, then the new scan runs and becomes version 2', async () => {
    const { page, context } = await newPage(e, vp);
    await signUpInBrowser(page, 'Rhea Analyst', `rerun-${vp}-${Date.now().toString(36)}@lab.example`);
    const group = await ok<{ id: string }>(page, 'POST', '/api/groups', { name: `Fictional Rerun Team ${vp}` });
    const scan = await ok<{ id: string }>(page, 'POST', `/api/groups/${group.id}/scans`, {
      points: [0, 1, 2].map((k) => ({ x: 500 + 250 * k, model: model(k) })),
      options: { method: 'toys', toys: 100, seed: 11 },
      meta: { title: `Fictional scalar scan ${vp}`, parameterName: 'm(S)', parameterUnit: 'GeV', quantity: 'mu', quantityUnit: '', sqrtS: 18, luminosity: 140, method: 'toys' },
    });
    await page.goto(`/groups/${group.id}/scans/${scan.id}`);
    await page.getByText(/stored as draft version 1/).waitFor({ timeout: 60_000 });

    await page.getByRole('row', { name: 'Show diagnostics of x = 750' }).click();
    const field = page.getByLabel('Pseudo-experiments per hypothesis', { exact: true });
    await field.waitFor();
    expect(await field.inputValue()).toBe('400');
    await field.fill('100');
    await page.getByRole('button', { name: 'Rerun this point', exact: true }).click();
    await page.getByText("Enter more than the point's current 100", { exact: true }).waitFor();
    await field.fill('300');
    await fullShot(page, vp, 'scan-rerun-point');
    await page.getByRole('button', { name: 'Rerun this point', exact: true }).click();

    // The new scan's progress page: its other points are already done; the rerun adds version 2.
    await page.waitForURL((u) => u.pathname.startsWith(`/groups/${group.id}/scans/`) && !u.pathname.endsWith(scan.id));
    await page.getByText(/stored as draft version 2/).waitFor({ timeout: 60_000 });
    await page.getByText('3 of 3 points (100%)', { exact: false }).waitFor();
    await page.getByRole('row', { name: 'Show diagnostics of x = 750' }).click();
    await page.getByText(/300 pseudo-experiments per hypothesis/).waitFor();
    await page.getByRole('link', { name: 'Open the draft result' }).click();
    await page.getByText('Point x = 750 rerun with 300 pseudo-experiments').first().waitFor();
    await fullShot(page, vp, 'scan-rerun-draft');

    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });
});
