/**
 * Small pieces of English for messages built from user text.
 */

/** The possessive of a name: "Heron Group’s", and "Dijet Resonances’" for a plural ending in s (common practice of English style guides). */
export function possessive(name: string): string {
  const n = name.trim();
  return /s$/i.test(n) ? `${n}’` : `${n}’s`;
}
