import { apiFromPage, fullShot, newPage, pageErrors, signUpInBrowser, startE2E, type E2E, type ViewportName } from '../helpers/browser';
import { samplePlane, samplePlaneCsv } from '../helpers/factories';

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

test('a CSV with two parameter columns is detected, its problems named by line, and saved as a plane (phone)', async () => {
  const vp: ViewportName = 'phone';
  const { page, context } = await newPage(e, vp);
  await signUpInBrowser(page, 'Ravi Analyst', `plane-upload-${Date.now().toString(36)}@lab.example`);
  await apiFromPage(page, 'POST', '/api/groups', { name: 'Invented Halcyon Ring Upload Team' });
  await page.goto('/results/new');
  await page.getByRole('heading', { name: 'Upload a result', exact: true }).waitFor();
  const good = samplePlaneCsv(samplePlane(4, 3));
  // Line 6 repeats line 5's (x, y).
  const lines = good.trim().split('\n');
  const bad = [...lines.slice(0, 5), [...lines[4]!.split(',').slice(0, 2), ...lines[5]!.split(',').slice(2)].join(','), ...lines.slice(6)].join('\n');
  const chooser = page.waitForEvent('filechooser');
  await page.getByRole('button', { name: 'Choose a file', exact: true }).click();
  await (await chooser).setFiles({ name: 'plane-bad.csv', mimeType: 'text/csv', buffer: Buffer.from(bad, 'utf8') });
  await page.getByText('plane-bad.csv').waitFor();
  await expect(page.getByRole('button', { name: /^Role of column “m_chi \[GeV\]”: / }).getAttribute('aria-label')).resolves.toMatch(/: Second parameter \(y\)$/);
  await page.getByText(/Line 6, column “m_X \[GeV\]”: x\[4\] and y\[4\] repeat|Line 6, column “m_X \[GeV\]”: m_X \[GeV\] \(line 6\) and m_chi \[GeV\] \(line 6\) repeat line 5/).first().waitFor();
  await expect(page.getByRole('button', { name: 'Save the result', exact: true }).getAttribute('aria-disabled')).resolves.toBe('true');
  await fullShot(page, vp, 'plane-upload-problem');

  const again = page.waitForEvent('filechooser');
  await page.getByRole('button', { name: 'Choose another file', exact: true }).click();
  await (await again).setFiles({ name: 'plane.csv', mimeType: 'text/csv', buffer: Buffer.from(good, 'utf8') });
  await page.getByRole('img', { name: /^Plane of 12 points, m_chi \[GeV\] against m_X \[GeV\]/ }).waitFor();
  await page.getByLabel('Title', { exact: true }).fill('Halcyon Ring X → χχ, uploaded');
  await page.getByLabel('√s (TeV)', { exact: true }).fill('18');
  await page.getByLabel('Integrated luminosity (fb⁻¹)', { exact: true }).fill('140');
  await page.getByRole('radiogroup', { name: 'Method' }).getByRole('radio', { name: 'Asymptotic CLs', exact: true }).click();
  await page.waitForFunction(() => !document.querySelector('[aria-label="Save the result"][aria-disabled="true"]'));
  await page.getByRole('button', { name: 'Save the result', exact: true }).click();
  await page.getByRole('heading', { name: 'Halcyon Ring X → χχ, uploaded', exact: true }).waitFor();
  await page.getByText('Contour lines', { exact: true }).waitFor();
  await page.getByRole('table', { name: 'Points 1 to 12 of 12' }).waitFor();
  expect(pageErrors(page)).toEqual([]);
  await context.close();
});
