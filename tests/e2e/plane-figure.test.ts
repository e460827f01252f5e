import { apiFromPage, fullShot, newPage, pageErrors, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';
import { samplePlane } from '../helpers/factories';

jest.setTimeout(240_000);

/**
 * A two-parameter plane figure composed in the browser, at phone and wide sizes: the results list
 * marks the plane; the layer picker of a plane figure offers the plane and leaves the curve out
 * (saying so); a change of kind shows the problem beside the layer; a plane option is changed,
 * undone and redone; the saved figure is drawn and downloads as SVG.
 */

let e: E2E;
beforeAll(async () => {
  e = await startE2E();
}, 180_000);
afterAll(async () => e?.close());

const planeMeta = (title: string) => ({ title, model: 'Invented scalar X to χ pairs', parameterName: 'm_X', parameterUnit: 'GeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'asymptotic' });

/** An invented falling limit curve over one parameter. */
function curveBody(title: string) {
  const x = [1000, 1500, 2000, 2500, 3000];
  const exp = x.map((m) => 20 * Math.exp(-m / 900));
  return {
    meta: { ...planeMeta(title), model: 'Invented heavy vector' },
    curve: { x, observed: exp.map((v, i) => v * (1 + 0.1 * Math.sin(i))), expected: { '0': exp } },
    theory: { x, central: x.map((m) => 300 * Math.exp(-m / 500)) },
  };
}

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  const tag = `${vp}-${Date.now().toString(36)}`;

  test('compose a plane figure: the picker takes planes only, an option undone and redone, saved, drawn, SVG', async () => {
    const { page, context } = await newPage(e, vp);
    await signUpInBrowser(page, 'Mira Planewright', `plane-figure-${tag}@lab.example`);
    const group = await apiFromPage<{ id: string }>(page, 'POST', '/api/groups', { name: `Invented Halcyon Ring Plane Team ${vp}` });
    const planeTitle = `Lanternfish X plane <b>${vp}</b>`;
    const curveTitle = `Lanternfish dijet curve ${vp}`;
    await apiFromPage(page, 'POST', `/api/groups/${group.id}/results`, { meta: planeMeta(planeTitle), plane: samplePlane(8, 6) });
    await apiFromPage(page, 'POST', `/api/groups/${group.id}/results`, curveBody(curveTitle));

    // The results list marks the result over two parameters, in words and in its link's name.
    await page.goto('/');
    await page.getByRole('link', { name: new RegExp(`^${planeTitle.replace(/[<>/]/g, '.')}, draft, version 1, over two parameters: m_X \\(GeV\\) and m_chi \\(GeV\\)$`) }).waitFor();
    await page.getByText('2 parameters: m_X × m_chi', { exact: true }).waitFor();
    expect(await page.getByText('2 parameters: m_X × m_chi', { exact: true }).count()).toBe(1);
    await page.getByRole('link', { name: `${curveTitle}, draft, version 1`, exact: true }).waitFor();
    await fullShot(page, vp, 'results-list-plane');

    await page.goto('/figures');
    await page.getByRole('button', { name: 'New figure', exact: true }).click();
    await page.getByRole('heading', { name: 'New figure', exact: true }).waitFor();
    // A limit plot's picker offers the curve and not the plane, and says why.
    await page.getByLabel('Find results to add').fill('Lanternfish');
    await page.getByRole('button', { name: `Add ${curveTitle} as a layer`, exact: true }).waitFor();
    await page.getByText('1 two-parameter result is not shown: a limit plot draws curves.', { exact: true }).waitFor();
    expect(await page.getByRole('button', { name: `Add ${planeTitle} as a layer`, exact: true }).count()).toBe(0);

    const unfold = page.getByRole('button', { name: 'Look and labels: unfold', exact: true });
    if (await unfold.count()) await unfold.click();
    await page.getByLabel('Figure name').fill(`Plane ${vp}`);
    await page.getByRole('radio', { name: 'Two-parameter plane', exact: true }).click();
    await page.getByRole('checkbox', { name: "Colour map of the first layer's observed limit (with a colour bar)", exact: true }).waitFor();

    // A plane figure's picker: the plane is offered (marked), the curve is not, and the note says so.
    const addPlane = page.getByRole('button', { name: `Add ${planeTitle} as a layer`, exact: true });
    await addPlane.waitFor();
    await page.getByText('1 one-parameter result is not shown: a plane figure draws results over two parameters.', { exact: true }).waitFor();
    expect(await page.getByRole('button', { name: `Add ${curveTitle} as a layer`, exact: true }).count()).toBe(0);
    await page.getByRole('img', { name: 'Over two parameters: m_X (GeV) and m_chi (GeV)', exact: true }).first().waitFor();
    await addPlane.click();
    const layer = page.getByRole('group', { name: `Layer 1: ${planeTitle}`, exact: true });
    await layer.waitFor();

    const preview = page.getByRole('img', { name: `Preview of the figure “Plane ${vp}” with 1 layer(s)`, exact: true });
    await preview.waitFor();
    await preview.locator('svg path').nth(30).waitFor({ state: 'attached' });

    // Back to a limit plot: the layer says beside itself why it no longer fits; undo brings the plane back.
    await page.getByRole('radio', { name: 'Limit plot', exact: true }).click();
    const misfit = layer.getByText('It is a result over two parameters: a figure of limit curves cannot draw it. Remove this layer or choose another kind of figure; saving refuses it.', { exact: true });
    await misfit.waitFor();
    await fullShot(page, vp, 'plane-figure-kind-misfit');
    await page.getByRole('button', { name: 'Undo', exact: true }).click();
    await page.locator('[role="radio"][aria-label="Two-parameter plane"][aria-checked="true"]').waitFor();
    await misfit.waitFor({ state: 'detached' });

    // A plane option: the excluded side shaded instead of hatched; undone, then redone.
    await page.getByRole('radio', { name: 'Light shading', exact: true }).click();
    await page.locator('[role="radio"][aria-label="Light shading"][aria-checked="true"]').waitFor();
    await page.getByRole('button', { name: 'Undo', exact: true }).click();
    await page.locator('[role="radio"][aria-label="Hatch ticks on the excluded side"][aria-checked="true"]').waitFor();
    await page.getByRole('button', { name: 'Redo', exact: true }).click();
    await page.locator('[role="radio"][aria-label="Light shading"][aria-checked="true"]').waitFor();

    await page.getByRole('button', { name: 'Save the new figure', exact: true }).click();
    await page.getByText(/^Version 1 · group only$/).waitFor();
    const figureId = /figures\/([0-9a-f-]{36})/.exec(page.url())![1]!;
    const spec = (await page.evaluate(`fetch('/api/groups/${group.id}/figures/${figureId}').then((r) => r.json()).then((b) => b.latest.spec)`)) as { kind: string; plane: { excludedMark: string; colorMap: boolean } };
    expect(spec.kind).toBe('plane');
    expect(spec.plane).toMatchObject({ excludedMark: 'shade', colorMap: true });
    // The saved figure is drawn in the preview (the colour map's cells and the labels as paths).
    await preview.waitFor();
    await page.waitForFunction(`(document.querySelector('[aria-label^="Preview of the figure"] svg')?.querySelectorAll('path').length ?? 0) > 30`);
    await fullShot(page, vp, 'plane-figure-saved');

    const svgHref = await page.getByRole('link', { name: 'SVG', exact: true }).getAttribute('href');
    const svg = await context.request.get(`${e.base}${svgHref}`);
    expect(svg.status()).toBe(200);
    expect(svg.headers()['content-type']).toContain('image/svg+xml');
    const text = await svg.text();
    expect(text).toContain('<svg');
    expect(text).toContain('<path');
    expect(text).not.toContain('<b>');
    const editable = await context.request.get(`${e.base}${await page.getByRole('link', { name: 'SVG with editable text, for vector editors', exact: true }).getAttribute('href')}`);
    const editableText = await editable.text();
    expect(editableText).toContain('m_chi [GeV]');
    expect(editableText).not.toContain('<b>');
    expect(pageErrors(page)).toEqual([]);
    await context.close();
  });
});
