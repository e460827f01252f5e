/**
 * The small-model form's state (text as typed) and its conversion to a counting model for the
 * statistics engine. Pure: tested in tests/unit/model-draft.test.ts.
 */
import type { CountingModelInput } from '@/shared/schemas/counting-model';

export type BinDraft = { observed: string; signal: string; backgrounds: string[] };
export type SystematicDraft = { name: string; /** percent per process, '' = no effect */ effects: Record<string, string> };
export type ModelDraft = { backgroundNames: string[]; bins: BinDraft[]; systematics: SystematicDraft[] };

export const SIGNAL = 'signal';

export const EXAMPLE_DRAFT: ModelDraft = {
  backgroundNames: ['dijet'],
  bins: [
    { observed: '12', signal: '1.2', backgrounds: ['10.1'] },
    { observed: '7', signal: '2.5', backgrounds: ['6.3'] },
    { observed: '3', signal: '1.1', backgrounds: ['2.2'] },
  ],
  systematics: [
    { name: 'luminosity', effects: { signal: '2', dijet: '2' } },
    { name: 'dijet shape', effects: { dijet: '10' } },
  ],
};

export function emptyBin(nBackgrounds: number): BinDraft {
  return { observed: '', signal: '', backgrounds: Array.from({ length: nBackgrounds }, () => '') };
}

/** Text → number, accepting a decimal comma; undefined when not a finite number. */
export function readNumber(s: string): number | undefined {
  const t = s.trim().replace(',', '.').replace(/\u2212/g, '-');
  if (!/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(t)) return undefined;
  const v = Number(t);
  return Number.isFinite(v) ? v : undefined;
}

/** Form field keys, e.g. `bins.1.observed`, `bins.0.backgrounds.0`, `systematics.1.effects.dijet`. */
export type DraftErrors = Record<string, string>;

/**
 * Converts the draft to a counting model. Typing problems (not a number) are reported per field
 * here; everything the engine checks (negative counts, unknown processes…) is left to it, so the
 * message is the engine's own.
 */
export function draftToModel(d: ModelDraft): { model?: CountingModelInput; errors: DraftErrors } {
  const errors: DraftErrors = {};
  const num = (key: string, s: string) => {
    const v = readNumber(s);
    if (v === undefined) errors[key] = s.trim() === '' ? 'Enter a number' : `"${s}" is not a number`;
    return v ?? NaN;
  };
  const names = d.backgroundNames.map((n, j) => {
    const name = n.trim();
    if (!name) errors[`backgroundNames.${j}`] = 'Give the background a name';
    return name;
  });
  const observed = d.bins.map((b, i) => num(`bins.${i}.observed`, b.observed));
  const signal = d.bins.map((b, i) => num(`bins.${i}.signal`, b.signal));
  const backgrounds = names.map((name, j) => ({ name, yields: d.bins.map((b, i) => num(`bins.${i}.backgrounds.${j}`, b.backgrounds[j] ?? '')) }));
  const systematics = d.systematics.map((s, k) => {
    const name = s.name.trim();
    if (!name) errors[`systematics.${k}.name`] = 'Give the uncertainty a name';
    const effects: Record<string, number> = {};
    for (const [proc, pct] of Object.entries(s.effects)) {
      if (pct.trim() === '') continue;
      const v = readNumber(pct);
      if (v === undefined) errors[`systematics.${k}.effects.${proc}`] = `"${pct}" is not a number`;
      else effects[proc] = v / 100;
    }
    if (Object.keys(effects).length === 0 && !errors[`systematics.${k}.name`]) errors[`systematics.${k}.name`] = 'Give a size (in %) for at least one process';
    return { name, effects };
  });
  if (Object.keys(errors).length) return { errors };
  return { model: { observed, signal, backgrounds, systematics }, errors };
}

/**
 * Maps an engine field path (e.g. `observed[1]`, `backgrounds[0].yields[2]`,
 * `systematics[1].effects.dijet`) to the form's field key.
 */
export function engineFieldToKey(field: string): string {
  const m = /^backgrounds\[(\d+)\]\.yields\[(\d+)\]/.exec(field);
  if (m) return `bins.${m[2]}.backgrounds.${m[1]}`;
  const b = /^(observed|signal)\[(\d+)\]/.exec(field);
  if (b) return `bins.${b[2]}.${b[1]}`;
  const s = /^systematics\[(\d+)\]\.effects(?:\.([A-Za-z_$][\w$]*)|\["(.+?)"\])?/.exec(field);
  if (s) return s[2] || s[3] ? `systematics.${s[1]}.effects.${s[2] ?? s[3]}` : `systematics.${s[1]}.name`;
  return field;
}
