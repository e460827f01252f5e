/** One field-level problem: `field` is a dotted path into the payload (e.g. `backgrounds.0.yields.2`). */
export type ErrorDetail = { field: string; message: string };
