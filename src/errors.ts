/**
 * Domain error types. Input problems are reported with the file (and line, column where known)
 * and never with a stack trace; gated outliers are data, not exceptions.
 */

/** Where in an input something went wrong. */
export interface SourcePlace {
  file: string;
  line?: number;
  column?: string;
}

function placeText(p: SourcePlace): string {
  let s = p.file;
  if (p.line !== undefined) s += `:${p.line}`;
  if (p.column !== undefined) s += ` (column ${p.column})`;
  return s;
}

/** A file (or a row of it) that cannot be read as a session. */
export class InputError extends Error {
  readonly file: string;
  readonly line?: number;
  readonly column?: string;
  readonly reason: string;
  constructor(place: SourcePlace, reason: string) {
    super(`${placeText(place)}: ${reason}`);
    this.name = 'InputError';
    this.file = place.file;
    this.line = place.line;
    this.column = place.column;
    this.reason = reason;
  }
}

/**
 * Several problems found in one file, reported together (so that a file with three typos needs
 * one run to fix, not three). `errors` holds each, with its line.
 */
export class InputErrorList extends InputError {
  readonly errors: InputError[];
  constructor(file: string, errors: InputError[], what = 'problems') {
    super({ file }, `${errors.length} ${what}:\n  ${errors.map((e) => e.message).join('\n  ')}`);
    this.name = 'InputErrorList';
    this.errors = errors;
  }
}

/** A configuration or profile that does not validate. */
export class ConfigError extends Error {
  readonly source: string;
  constructor(source: string, reason: string) {
    super(`${source}: ${reason}`);
    this.name = 'ConfigError';
    this.source = source;
  }
}

/** Wrong use of the command line (exit status 2). */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** A numerical failure (e.g. a covariance that lost positive definiteness). */
export class NumericalError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'NumericalError';
  }
}

/** A warning about input that was handled by a documented rule. */
export interface InputWarning {
  file: string;
  line?: number;
  code: string;
  message: string;
}
