/**
 * The one error type of the readers. `code` is the QC finding code the cohort report files it
 * under; `where` is the 0-based [row, column] of the offending cell when there is one.
 */
export class InputFileError extends Error {
  readonly file: string;
  readonly code: string;
  readonly where?: [number, number];
  constructor(file: string, message: string, code = 'unreadable', where?: [number, number]) {
    super(`${file}: ${message}`);
    this.name = 'InputFileError';
    this.file = file;
    this.code = code;
    this.where = where;
  }
  /** The message without the leading file name. */
  get detail(): string {
    const prefix = `${this.file}: `;
    return this.message.startsWith(prefix) ? this.message.slice(prefix.length) : this.message;
  }
}

/** Turns a file-system error into an InputFileError that names the file. */
export function fsError(file: string, e: unknown): InputFileError {
  const code = (e as NodeJS.ErrnoException)?.code;
  const why =
    code === 'ENOENT'
      ? 'no such file'
      : code === 'EACCES' || code === 'EPERM'
        ? 'permission denied'
        : code === 'EISDIR'
          ? 'is a folder, not a file'
          : (code ?? String(e));
  return new InputFileError(file, `cannot read (${why})`, 'unreadable');
}
