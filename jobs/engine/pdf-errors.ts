/**
 * Errors raised by the PDF writers. `code` is stable (reports and the CLI key on it); the message is
 * a sentence a card maker can act on.
 */
export class PdfEngineError extends Error {
  readonly code: string;

  constructor(code: string, message: string) {
    super(`${code}: ${message}`);
    this.name = 'PdfEngineError';
    this.code = code;
  }
}
