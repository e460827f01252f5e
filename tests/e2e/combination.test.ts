import type { Page } from 'playwright-core';
import { apiFromPage, fullShot, newPage, pageErrors, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

/**
 * The joint combination as a user starts it: two results computed by scans, the plan (common
 * values, nuisance parameters per input, the shared one ticked as one parameter) before anything
 * is computed, a shared parameter unlinked, and the start opening the combination's scan page.
 */

jest.setTimeout(240_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E({ jobs: true });
});
afterAll(async () => e?.close());

const ok = apiFromPage;

/** An invented one-bin channel per grid point, with its own background and a shared luminosity systematic. */
const model = (k: number, bkg: string) => ({ observed: [8 + k], signal: [3], backgrounds: [{ name: bkg, yields: [7.5 + k] }], systematics: [{ name: 'luminosity', effects: { signal: 0.03, [bkg]: 0.03 } }, { name: `${bkg} shape`, effects: { [bkg]: 0.1 } }] });

async function computedScan(page: Page, groupId: string, title: string, bkg: string): Promise<void> {
  const scan = await ok<{ id: string }>(page, 'POST', `/api/groups/${groupId}/scans`, {
    points: [0, 1, 2].map((k) => ({ x: 500 + 250 * k, model: model(k, bkg) })),
    options: { method: 'asymptotic' },
    meta: { title, parameterName: 'm(S)', parameterUnit: 'GeV', quantity: 'mu', quantityUnit: '', sqrtS: 18, luminosity: 96.5, method: 'asymptotic' },
  });
  for (let i = 0; i < 120; i++) {
    const s = await ok<{ state: string; resultId: string | null }>(page, 'GET', `/api/groups/${groupId}/scans/${scan.id}`);
    if (s.state === 'done' && s.resultId) return;
    await page.waitForTimeout(500);
  }
  throw new Error(`scan ${title} did not finish`);
}

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  test('pick two scan results, read the plan, unlink the shared parameter, start: the combination runs as a scan', async () => {
    const { page, context } = await newPage(e, vp);
    await signUpInBrowser(page, 'Ines Combiner', `joint-${vp}-${Date.now().toString(36)}@lab.example`);
    const group = await ok<{ id: string }>(page, 'POST', '/api/groups', { name: `Fictional Joint Board ${vp}` });
    await page.goto('/');
    await computedScan(page, group.id, `Scalar to photons channel ${vp}`, 'diphoton');
    await computedScan(page, group.id, `Scalar to leptons channel ${vp}`, 'dilepton');

    await page.goto('/');
    await page.getByRole('button', { name: 'Joint combination', exact: true }).click();
    await page.getByRole('heading', { name: 'Joint combination', exact: true }).waitFor();
    for (const title of [`Scalar to photons channel ${vp}`, `Scalar to leptons channel ${vp}`]) {
      await page.getByLabel('Find results to combine').fill(title);
      await page.getByRole('button', { name: `Add ${title} v1 to the combination`, exact: true }).click();
      await page.getByRole('group', { name: new RegExp(`^Input \\d: ${title}`) }).waitFor();
    }
    // The plan, before anything is computed.
    await page.getByText('3 common parameter values: 500, 750, 1000.', { exact: true }).waitFor();
    const input1 = page.getByRole('group', { name: new RegExp(`^Input 1: Scalar to photons channel ${vp}`) });
    expect(await input1.innerText()).toContain('nuisance parameters: ');
    expect(await input1.innerText()).toContain('diphoton shape');
    const lumi = page.getByRole('checkbox', { name: 'luminosity: one parameter for all inputs', exact: true });
    await lumi.waitFor();
    expect(await lumi.getAttribute('aria-checked')).toBe('true');
    await lumi.click();
    await page.locator('[role="checkbox"][aria-label="luminosity: one parameter for all inputs"][aria-checked="false"]').waitFor();
    await fullShot(page, vp, 'combination-plan');

    await page.getByLabel('Title of the combination').fill(`Scalar photons + leptons ${vp}`);
    await page.getByRole('button', { name: 'Start the combination', exact: true }).click();
    await page.waitForURL((u) => u.pathname.startsWith(`/groups/${group.id}/scans/`));
    await page.getByText(/stored as draft version 1/).waitFor({ timeout: 60_000 });
    await fullShot(page, vp, 'combination-scan');
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });
});
