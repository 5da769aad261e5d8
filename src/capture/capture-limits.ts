// Budgets checked before and while a capture is read, stated in the README.

/** Largest capture file read, bytes (1 GiB). */
export const MAX_CAPTURE_BYTES = 1024 ** 3;
/** Most samples kept: 25 million × (time + drain) × 8 bytes = 400 MB at most. */
export const MAX_CAPTURE_SAMPLES = 25_000_000;
/** Longest line, characters: a scope's line is a few dozen; anything longer is not a capture. */
export const MAX_LINE_CHARS = 65_536;
/** Most columns in a data row. */
export const MAX_COLUMNS = 64;
