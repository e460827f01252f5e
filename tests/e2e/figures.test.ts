import type { Page } from 'playwright-core';
import { fullShot, newPage, pageErrors, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(240_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E();
});
afterAll(async () => e?.close());

/** An invented falling limit curve with bands and a theory line, scaled per result. */
function resultBody(title: string, scale: number) {
  const x = [1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5, 5];
  const exp = x.map((m) => scale * 20 * Math.exp(-1.1 * m));
  return {
    meta: { title, model: 'Fictional heavy vector', parameterName: "$m_{V'}$", parameterUnit: 'TeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, method: 'asymptotic', reference: `LF-FIG-${title.length}` },
    curve: {
      x,
      observed: exp.map((v, i) => v * (1 + 0.15 * Math.sin(i))),
      expected: { '-2': exp.map((v) => v * 0.5), '-1': exp.map((v) => v * 0.7), '0': exp, '1': exp.map((v) => v * 1.4), '2': exp.map((v) => v * 1.9) },
    },
    theory: { x, central: x.map((m) => 400 * Math.exp(-1.6 * m)) },
  };
}

/** POSTs JSON through the API from the page (same session cookie); the status and the answer. */
async function postFromPage(page: Page, url: string, body: unknown): Promise<[number, { resultId?: string }]> {
  // Code as text: it runs in the page as written (the test's transpiler would add helpers the page lacks).
  const u = JSON.stringify(url);
  const b = JSON.stringify(JSON.stringify(body));
  return (await page.evaluate(`fetch(${u}, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: ${b} }).then((r) => r.json().then((j) => [r.status, j]))`)) as [number, { resultId?: string }];
}

/** Creates a result (a draft, version 1) through the API from the page; its id. */
async function createResult(page: Page, groupId: string, title: string, scale: number): Promise<string> {
  const [status, body] = await postFromPage(page, `/api/groups/${groupId}/results`, resultBody(title, scale));
  expect(status).toBe(201);
  return body.resultId!;
}

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  const tag = `${vp}-${Date.now().toString(36)}`;

  test('compose a three-layer overlay, switch the theme, save, download SVG and PDF', async () => {
    const { page, context } = await newPage(e, vp);
    await signUpInBrowser(page, 'Fen Editor', `figures-${tag}@lab.example`);
    await page.getByRole('button', { name: 'Create a group', exact: true }).click();
    await page.getByLabel('Group name').fill(`Fictional Figure Team ${vp}`);
    await page.getByRole('button', { name: 'Create group', exact: true }).click();
    await page.getByRole('heading', { name: 'Members', exact: true }).waitFor();
    const groupId = (await page.evaluate(`fetch('/api/groups').then((r) => r.json()).then((b) => b.groups[0].id)`)) as string;
    const resultIds = [
      await createResult(page, groupId, `Dijet V prime ${vp}`, 1),
      await createResult(page, groupId, `Lepton pair V prime ${vp}`, 0.6),
      await createResult(page, groupId, `Top pair V prime ${vp}`, 1.7),
    ];

    await page.goto('/figures');
    await page.getByRole('region', { name: 'No figures yet' }).waitFor();
    await page.getByRole('button', { name: 'New figure', exact: true }).click();
    await page.getByRole('heading', { name: 'New figure', exact: true }).waitFor();
    await page.getByText('Not saved yet: the figure is stored when you first save it', { exact: true }).waitFor();
    // Nothing is stored before the first save.
    expect(await page.evaluate(`fetch('/api/groups/${groupId}/figures').then((r) => r.json()).then((b) => b.figures.length)`)).toBe(0);
    for (const title of [`Dijet V prime ${vp}`, `Lepton pair V prime ${vp}`, `Top pair V prime ${vp}`]) {
      await page.getByLabel('Find results to add').fill(title);
      await page.getByRole('button', { name: `Add ${title} as a layer`, exact: true }).click();
      await page.getByRole('group', { name: new RegExp(`^Layer \\d: ${title}$`) }).waitFor();
    }
    // On phones the look-and-labels controls start folded.
    const unfold = page.getByRole('button', { name: 'Look and labels: unfold', exact: true });
    if (await unfold.count()) await unfold.click();
    await page.getByLabel('Figure name').fill(`Vector overlay ${vp}`);
    const preview = page.getByRole('img', { name: /^Preview of the figure “Vector overlay .*” with 3 layer\(s\)$/ });
    await preview.waitFor();
    // The preview draws labels as paths (typeset by the server), never as text elements; the
    // glyphs arrive after the frame, so wait until they are drawn.
    await preview.locator('svg path').nth(50).waitFor({ state: 'attached' });
    expect(await preview.locator('svg path').count()).toBeGreaterThan(50);
    expect(await preview.locator('svg text').count()).toBe(0);
    await fullShot(page, vp, 'composer-publication');

    // Bands move to the second layer; the theme changes to slides; undo brings publication back, redo slides.
    await page.getByRole('checkbox', { name: 'Layer 2 carries the ±1σ/±2σ bands', exact: true }).click();
    await page.getByRole('radio', { name: 'Slides', exact: true }).click();
    await page.getByRole('button', { name: 'Undo', exact: true }).click();
    await page.locator('[role="radio"][aria-label="Publication"][aria-checked="true"]').waitFor();
    await page.getByRole('button', { name: 'Redo', exact: true }).click();
    await page.locator('[role="radio"][aria-label="Slides"][aria-checked="true"]').waitFor();
    // The theme brought its own size; slide type squeezed onto a journal column is flagged, and undone.
    await page.getByRole('button', { name: 'Size: Slide, 16:9 (25.4 cm)', exact: true }).click();
    await page.getByRole('radio', { name: 'Journal, one column (8.6 cm)', exact: true }).click();
    const offPage = page.getByRole('status').filter({ hasText: 'out of the page at this size' });
    await offPage.waitFor();
    await page.getByRole('button', { name: 'Undo', exact: true }).click();
    await page.getByRole('button', { name: 'Size: Slide, 16:9 (25.4 cm)', exact: true }).waitFor();
    await offPage.waitFor({ state: 'detached' });
    // An annotation placed by dragging on the preview (the fields are the keyboard way and follow it).
    await page.getByRole('button', { name: 'Add an annotation', exact: true }).click();
    await page.getByRole('button', { name: 'Place annotation 1 on the preview', exact: true }).click();
    await page.getByText(/^Press or drag on the preview to place annotation 1/).waitFor();
    // Press only once the preview is drawn again with the new annotation (its label is typeset by
    // the server first): a press while it is being redrawn lands on nothing.
    await page.waitForFunction(`(document.querySelector('[aria-label^="Preview of the figure"] svg')?.querySelectorAll('path').length ?? 0) > 50`);
    await page.waitForTimeout(300);
    const box = (await preview.boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.3, box.y + box.height * 0.3);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.45, { steps: 5 });
    await page.mouse.up();
    await page.getByRole('button', { name: 'Place annotation 1 on the preview', exact: true }).waitFor();
    const across = Number(await page.getByLabel('Annotation 1 across (0–1)', { exact: true }).inputValue());
    const up = Number(await page.getByLabel('Annotation 1 up (0–1)', { exact: true }).inputValue());
    expect([across, up]).not.toEqual([0.05, 0.6]);
    expect(across).toBeGreaterThan(0.2);
    expect(across).toBeLessThan(0.8);
    expect(up).toBeGreaterThan(0.2);
    expect(up).toBeLessThan(0.8);
    // Leaving with unsaved edits asks first: refused, the composer stays.
    page.once('dialog', (d) => void d.dismiss());
    await page.getByRole('link', { name: 'Results', exact: true }).click();
    await page.getByRole('button', { name: 'Save the new figure', exact: true }).waitFor();
    expect(page.url()).toContain('/figures/new');
    await page.getByRole('button', { name: 'Save the new figure', exact: true }).click();
    await page.getByText(/^Version 1 · group only$/).waitFor();
    expect(page.url()).not.toContain('/figures/new');
    expect(await page.evaluate(`fetch('/api/groups/${groupId}/figures').then((r) => r.json()).then((b) => b.figures.length)`)).toBe(1);
    // The saved slide is drawn in the preview (labels as paths) before the picture is taken.
    await preview.waitFor();
    await page.waitForFunction(`(document.querySelector('[aria-label^="Preview of the figure"] svg')?.querySelectorAll('path').length ?? 0) > 50`);
    await fullShot(page, vp, 'composer-slides');

    // Downloads of the saved version.
    const svgHref = await page.getByRole('link', { name: 'SVG', exact: true }).getAttribute('href');
    const pdfHref = await page.getByRole('link', { name: 'PDF', exact: true }).getAttribute('href');
    const svg = await context.request.get(`${e.base}${svgHref}`);
    expect(svg.status()).toBe(200);
    expect(svg.headers()['content-type']).toContain('image/svg+xml');
    const svgText = await svg.text();
    expect(svgText).toContain('<svg');
    expect(svgText).not.toContain('<text');
    // Downloads are saved as files, never opened over the editor: the link has the download
    // attribute and the server answers an attachment. The editable-text SVG is the second choice.
    expect(await page.getByRole('link', { name: 'SVG', exact: true }).getAttribute('download')).not.toBeNull();
    expect(svg.headers()['content-disposition']).toMatch(/^attachment; filename=".+\.svg"$/);
    const editableLink = page.getByRole('link', { name: 'SVG with editable text, for vector editors', exact: true });
    expect(await editableLink.getAttribute('download')).not.toBeNull();
    const editable = await context.request.get(`${e.base}${await editableLink.getAttribute('href')}`);
    expect(editable.status()).toBe(200);
    expect(editable.headers()['content-disposition']).toMatch(/^attachment; filename=".+-editable\.svg"$/);
    expect(await editable.text()).toContain('<text');
    const pdf = await context.request.get(`${e.base}${pdfHref}`);
    expect(pdf.status()).toBe(200);
    expect((await pdf.body()).subarray(0, 5).toString()).toBe('%PDF-');

    await page.goto('/figures');
    await page.getByRole('link', { name: `Figure Vector overlay ${vp}` }).waitFor();
    await fullShot(page, vp, 'figures-list');

    // The composer says which layers the public would not see; two results published as public leave one hidden.
    await page.getByRole('link', { name: `Figure Vector overlay ${vp}` }).click();
    await page.getByText(/^All 3 layers show results the public cannot see/).waitFor();
    for (const id of resultIds.slice(0, 2)) expect((await postFromPage(page, `/api/groups/${groupId}/results/${id}/versions/1/publish`, { public: true }))[0]).toBe(200);
    await page.reload();
    await page.getByText(/^1 of 3 layers shows a result the public cannot see/).waitFor();
    // Made public, the figure appears to signed-out visitors on the public figures page with its picture and downloads.
    await page.getByRole('checkbox', { name: 'Public: anyone can see and download this figure', exact: true }).click();
    await page.locator('[role="checkbox"][aria-label="Public: anyone can see and download this figure"][aria-checked="true"]').waitFor();
    await page.getByRole('status').filter({ hasText: 'Public copies leave it out and say so on the figure' }).waitFor();
    // A copy can be deleted (asked first); the original stays.
    await page.getByRole('button', { name: 'Duplicate', exact: true }).click();
    await page.getByRole('heading', { name: `Copy of Vector overlay ${vp}`, exact: true }).waitFor();
    await page.getByRole('button', { name: `Delete the figure Copy of Vector overlay ${vp}`, exact: true }).click();
    await page.getByRole('button', { name: 'Delete figure', exact: true }).click();
    await page.getByRole('link', { name: `Figure Vector overlay ${vp}` }).waitFor();
    expect(await page.getByRole('link', { name: `Figure Copy of Vector overlay ${vp}` }).count()).toBe(0);
    expect(pageErrors(page)).toEqual([]);
    await context.close();

    const visitor = await newPage(e, vp);
    const v = visitor.page;
    await v.goto('/sign-in');
    await v.getByRole('link', { name: 'Browse public figures', exact: true }).click();
    await v.getByRole('heading', { name: 'Public figures', exact: true }).waitFor();
    await v.getByLabel('Search public figures').fill(`Vector overlay ${vp}`);
    const picture = v.getByRole('img', { name: `Figure: Vector overlay ${vp}`, exact: true });
    await picture.waitFor();
    // The picture really loaded (an <img> with pixels), not just a frame.
    await v.waitForFunction(`Array.from(document.querySelectorAll('img')).some((i) => i.complete && i.naturalWidth > 0 && i.src.includes('/api/public/figures/'))`);
    const png = await visitor.context.request.get(`${e.base}${await v.getByRole('link', { name: `Vector overlay ${vp}: PNG at 300 dpi`, exact: true }).getAttribute('href')}`);
    expect(png.status()).toBe(200);
    expect(png.headers()['content-type']).toBe('image/png');
    // Other themes filter it out; a search for nothing public says so.
    await v.getByRole('radio', { name: 'Outreach (plain words)', exact: true }).click();
    await v.getByRole('region', { name: 'No public figures match' }).waitFor();
    await v.getByRole('radio', { name: 'All themes', exact: true }).click();
    await picture.waitFor();
    await fullShot(v, vp, 'public-figures');
    expect(pageErrors(v)).toEqual([]);
    await visitor.context.close();
  });
});
