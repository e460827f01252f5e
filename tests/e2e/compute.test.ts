import fs from 'node:fs';
import path from 'node:path';
import { fullShot, newPage, pageErrors, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(240_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E({ jobs: true });
});
afterAll(async () => e?.close());

const EXAMPLE = fs.readFileSync(path.resolve(__dirname, '../../assets/examples/scan-example.csv'));

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  const tag = `${vp}-${Date.now().toString(36)}`;

  test('a quick limit computes in the page; the example scan runs to 100%, shows a point’s diagnostics and becomes a draft', async () => {
    const { page, context } = await newPage(e, vp);
    await page.goto('/sign-up');
    await page.getByLabel('Your name').fill('Cato Analyst');
    await page.getByLabel('E-mail').fill(`scan-${tag}@lab.example`);
    await page.getByLabel('Password').fill('a-long-test-password');
    await page.getByRole('button', { name: 'Create account', exact: true }).click();
    await page.getByRole('region', { name: 'You are not in a group yet' }).waitFor();
    await page.getByRole('button', { name: 'Create a group', exact: true }).click();
    await page.getByLabel('Group name').fill(`Fictional Scan Team ${vp}`);
    await page.getByRole('button', { name: 'Create group', exact: true }).click();
    await page.getByRole('heading', { name: 'Members', exact: true }).waitFor();

    // Quick limit: the example model's limit appears at once, and follows an edit.
    await page.goto('/compute');
    const observed = page.getByRole('group', { name: 'Observed limit' });
    await observed.waitFor();
    const before = await observed.innerText();
    await page.getByLabel('Observed, bin 2', { exact: true }).fill('17');
    await page.waitForFunction((b) => (document.querySelector('[aria-label="Observed limit"]') as HTMLElement | null)?.innerText !== b, before);
    await page.getByLabel('Observed, bin 3', { exact: true }).fill('-1');
    await page.getByText('Must not be negative (got -1)').first().waitFor();
    await page.getByLabel('Observed, bin 3', { exact: true }).fill('3');
    await fullShot(page, vp, 'compute-quick');

    // A scan from the example file.
    await page.getByRole('radio', { name: 'Scan a grid', exact: true }).click();
    const chooser = page.waitForEvent('filechooser');
    await page.getByRole('button', { name: 'Choose a scan file', exact: true }).click();
    await (await chooser).setFiles({ name: 'scan-example.csv', mimeType: 'text/csv', buffer: EXAMPLE });
    await page.getByText('scan-example.csv: 6 grid points from 1000 to 3500, 3 bins each, nominal σ×B given.').waitFor();
    await page.getByLabel('Title', { exact: true }).fill(`Fictional dijet scan ${vp}`);
    await page.getByLabel('Parameter name', { exact: true }).fill('m(V′)');
    await page.getByLabel('Parameter unit', { exact: true }).fill('GeV');
    await page.getByLabel('√s (TeV)', { exact: true }).fill('18');
    await page.getByLabel('Integrated luminosity (fb⁻¹)', { exact: true }).fill('140');
    await fullShot(page, vp, 'compute-scan-form');
    await page.getByRole('button', { name: 'Start the scan', exact: true }).click();

    // Progress reaches 100%, the draft is announced.
    const bar = page.getByRole('progressbar', { name: 'Points computed' });
    await bar.waitFor();
    await page.locator('[role="progressbar"][aria-valuenow="6"]').waitFor({ timeout: 60_000 });
    await page.getByText('6 of 6 points (100%)', { exact: false }).waitFor();
    await page.getByText(/stored as draft version 1/).waitFor();

    // Diagnostics of one grid point: the CLs plot, the fit and the pulls.
    await page.getByRole('row', { name: 'Show diagnostics of x = 2000' }).click();
    await page.getByRole('img', { name: /CLs, CLs\+b and CLb against the signal strength/ }).waitFor();
    await page.getByRole('table', { name: 'Fitted nuisance parameters' }).waitFor();
    await page.getByText('dijet shape').first().waitFor();
    await fullShot(page, vp, 'scan-done');

    await page.getByRole('link', { name: 'Open the draft result' }).click();
    await page.getByRole('heading', { name: `Fictional dijet scan ${vp}`, exact: true }).waitFor();
    await page.getByText(/Computed by Bandwright from event counts/).first().waitFor();
    await fullShot(page, vp, 'scan-draft-result');

    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });
});
