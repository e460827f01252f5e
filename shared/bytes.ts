/**
 * Byte sizes: the one set of units (binary: 1 MB = 1024² bytes) and the one way sizes are written
 * (quota, usage, upload limit, file sizes), and the upload limit's default.
 */
export const KB = 1024;
export const MB = 1024 * KB;
export const GB = 1024 * MB;

/** The server's upload limit unless UPLOAD_LIMIT_BYTES says otherwise (the app uses it until the server has answered). */
export const DEFAULT_UPLOAD_LIMIT_BYTES = 5 * MB;

/** `v` cut (not rounded) to `digits` decimals, trailing zeros dropped: usage is never overstated. */
const cut = (v: number, digits: number) => String(Math.floor(v * 10 ** digits + 1e-9) / 10 ** digits);

/**
 * A byte count as people read it: "50 MB", "20 GB", "49.99 MB", "820 KB", "312 bytes". Cut, not
 * rounded, so 49.999 MB reads "49.99 MB" and never "50 MB" beside a 50 MB quota.
 */
export function formatBytes(bytes: number): string {
  const n = Math.max(0, Math.round(bytes));
  if (n >= GB) return `${cut(n / GB, 2)} GB`;
  if (n >= MB) return `${cut(n / MB, 2)} MB`;
  if (n >= KB) return `${cut(n / KB, 1)} KB`;
  return n === 1 ? '1 byte' : `${n} bytes`;
}
