// Stable error codes shared by the engine, the CLI and the API. The HTTP status travels with the code
// so the server can answer with it directly; the message is a sentence a card maker understands.
export const ERROR_STATUS = {
  RECIPE_INVALID: 400,
  ARCHIVE_UNREADABLE: 400,
  ARCHIVE_PATH: 400,
  ARCHIVE_SYMLINK: 400,
  ARCHIVE_NESTED: 400,
  ARCHIVE_TOO_LARGE: 413,
  ARCHIVE_TOO_MANY_ENTRIES: 413,
  ARCHIVE_RATIO: 413,
  ARCHIVE_EMPTY: 400,
  MANIFEST_INVALID: 400,
  BACK_MISSING: 400,
  SOURCE_NOT_FOUND: 404,
  OUTPUT_PATH: 400,
} as const;

export type ErrorCode = keyof typeof ERROR_STATUS;

export class BleedwrightError extends Error {
  readonly code: ErrorCode;
  readonly status: number;

  constructor(code: ErrorCode, message: string) {
    super(message);
    this.name = 'BleedwrightError';
    this.code = code;
    this.status = ERROR_STATUS[code];
  }

  /** The one-line form the CLI prints on stderr: `CODE: message`. */
  toLine(): string {
    return `${this.code}: ${this.message.replace(/\s*\n\s*/g, ' ')}`;
  }
}

export function isBleedwrightError(err: unknown): err is BleedwrightError {
  return err instanceof BleedwrightError;
}
