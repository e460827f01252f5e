import { apiFromPage, fullShot, newPage, pageErrors, signUpInBrowser, startE2E, type E2E, type ViewportName } from '../helpers/browser';
import { samplePlane } from '../helpers/factories';

jest.setTimeout(240_000);

/**
 * A result over two parameters on its page, at phone and wide widths: the plane preview, the
 * contour lines with their downloads and the points a page at a time; its permanent link the same.
 */

let e: E2E;
beforeAll(async () => {
  e = await startE2E();
}, 180_000);
afterAll(async () => e?.close());

test.each(['phone', 'wide'] as ViewportName[])('the plane result page (%s)', async (vp) => {
  const { page, context } = await newPage(e, vp);
  await signUpInBrowser(page, 'Noor Analyst', `plane-${vp}-${Date.now().toString(36)}@lab.example`);
  const group = await apiFromPage<{ id: string }>(page, 'POST', '/api/groups', { name: `Invented Halcyon Ring Dark Sector Team ${vp}` });
  const plane = samplePlane(12, 9);
  const meta = { title: 'Halcyon Ring X → χχ search <i>over two masses</i>', parameterName: 'm_X', parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'asymptotic' };
  const v = await apiFromPage<{ resultId: string; slug: string }>(page, 'POST', `/api/groups/${group.id}/results`, { meta, plane });
  await page.goto(`/groups/${group.id}/results/${v.resultId}`);
  await page.getByRole('img', { name: /^Plane of 108 points, m_chi \[GeV\] against m_X \[GeV\]/ }).waitFor();
  await page.getByText('Contour lines', { exact: true }).waitFor();
  await page.getByText(/^Observed: \d+ lines?, \d+ vertices/).first().waitFor();
  await page.getByLabel('Download the contour lines as CSV').waitFor();
  await page.getByRole('table', { name: 'Points 1 to 50 of 108' }).waitFor();
  await page.getByRole('button', { name: 'Next page of points' }).click();
  await page.getByRole('table', { name: 'Points 51 to 100 of 108' }).waitFor();
  // The title is the uploader's text, shown as text.
  await page.getByText('Halcyon Ring X → χχ search <i>over two masses</i>').first().waitFor();
  await fullShot(page, vp, 'plane-result');
  expect(pageErrors(page)).toEqual([]);
  await context.close();
});
