import { apiFromPage, fullShot, newPage, pageErrors, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(240_000);

/**
 * A scan over two parameters on its progress page: the plane fills in as points finish (named by
 * its counts), every point done at the end, a point's rerun named by (x, y); and a failed point
 * marked. Screenshots at phone and wide sizes.
 */

let e: E2E;
beforeAll(async () => {
  e = await startE2E({ jobs: true });
}, 180_000);
afterAll(async () => e?.close());

const XS = [500, 750, 1000, 1250, 1500];
const YS = [50, 100, 150, 200, 250];
const META = { parameterName: 'm(V)', parameterUnit: 'GeV', quantity: 'mu', quantityUnit: '', sqrtS: 18, luminosity: 140, method: 'toys', yName: 'm(χ)', yUnit: 'GeV' };

/** An invented one-bin model per grid point: the signal falls with m(V) and grows with m(χ). `fail` gives it no signal (the engine refuses it). */
function points(fail?: (x: number, y: number) => boolean) {
  return XS.flatMap((x, i) =>
    YS.map((y, j) => ({
      x,
      y,
      model: {
        observed: [9 + i + j],
        signal: [fail?.(x, y) ? 0 : 6 * Math.exp(-(x - 500) / 600) * (y / 150)],
        backgrounds: [{ name: 'continuum', yields: [8 + i] }],
        systematics: [{ name: 'luminosity', effects: { signal: 0.03, continuum: 0.03 } }],
      },
    })),
  );
}

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  test('the plane fills in as points finish, named by its counts, until every point is done; a point is named by (x, y)', async () => {
    const { page, context } = await newPage(e, vp);
    await signUpInBrowser(page, 'Ines Analyst', `plane-scan-${vp}-${Date.now().toString(36)}@lab.example`);
    const group = await apiFromPage<{ id: string }>(page, 'POST', '/api/groups', { name: `Fictional Plane Scan Team ${vp}` });
    const scan = await apiFromPage<{ id: string; totalPoints: number }>(page, 'POST', `/api/groups/${group.id}/scans`, {
      points: points(),
      options: { method: 'toys', toys: 100, seed: 5 },
      meta: { ...META, title: `Fictional vector-partner plane ${vp}` },
    });
    expect(scan.totalPoints).toBe(25);
    await page.goto(`/groups/${group.id}/scans/${scan.id}`);
    const plane = page.getByRole('img', { name: /^(\d+ of 25 points done|All 25 points done)\b.*Plane of m\(χ\) \[GeV\] against m\(V\) \[GeV\]/ });
    await plane.waitFor();
    // A few points in (or all of them, on a fast machine) for the picture of the plane filling in.
    await page.getByRole('img', { name: /^((?:[4-9]|1\d|2[0-4]) of 25 points done|All 25 points done)\b/ }).waitFor({ timeout: 60_000 });
    await fullShot(page, vp, 'plane-scan-running');
    await page.getByRole('img', { name: /^All 25 points done\. Plane of m\(χ\) \[GeV\] against m\(V\) \[GeV\]; done points coloured by their observed limit from / }).waitFor({ timeout: 90_000 });
    await page.getByText(/stored as draft version 1/).waitFor({ timeout: 30_000 });
    await page.getByText('Done 25', { exact: true }).waitFor();

    // A point of the plane is named by both coordinates, in the list and in its rerun control.
    await page.getByRole('row', { name: 'Show diagnostics of (x, y) = (750, 100)', exact: true }).click();
    await page.getByText('Grid point (x, y) = (750, 100)', { exact: true }).waitFor();
    await page.getByRole('group', { name: 'Rerun the point (x, y) = (750, 100) with more pseudo-experiments', exact: true }).waitFor();
    await page.getByText(/only \(x, y\) = \(750, 100\) is computed again/).waitFor();
    await fullShot(page, vp, 'plane-scan-done');
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });
});

test('a failed point is marked and counted; the scan still makes its plane draft (phone)', async () => {
  const vp: ViewportName = 'phone';
  const { page, context } = await newPage(e, vp);
  await signUpInBrowser(page, 'Tomas Analyst', `plane-scan-fail-${Date.now().toString(36)}@lab.example`);
  const group = await apiFromPage<{ id: string }>(page, 'POST', '/api/groups', { name: 'Fictional Plane Holes Team' });
  const scan = await apiFromPage<{ id: string }>(page, 'POST', `/api/groups/${group.id}/scans`, {
    points: points((x, y) => x === 1000 && y === 150),
    options: { method: 'asymptotic' },
    meta: { ...META, method: 'asymptotic', title: 'Fictional plane with a failing point' },
  });
  await page.goto(`/groups/${group.id}/scans/${scan.id}`);
  await page.getByRole('img', { name: /^24 of 25 points done, 1 failed\. Plane of / }).waitFor({ timeout: 90_000 });
  await page.getByText('Failed 1', { exact: true }).waitFor();
  await page.getByText(/stored as draft version 1/).waitFor({ timeout: 30_000 });
  await fullShot(page, vp, 'plane-scan-failed-point');
  expect(pageErrors(page)).toEqual([]);
  await context.close();
});
