/**
 * Delimited text to records, chunk by chunk, with the line each record starts on. Text arrives
 * with line endings already folded to LF (decode.ts), so a record ends at an LF outside quotes.
 *
 * Quoting follows RFC 4180 (a field that starts with a double quote runs to the matching quote;
 * `""` inside it is one quote; line breaks inside it belong to the field), relaxed the way lab
 * exports need: a quote inside an unquoted field is kept as text, and a quoted field followed by
 * text other than a delimiter or line end is kept as written, quotes included, and runs on
 * unquoted. These are csv-parse's rules with `relax_quotes`, which the tests use as the oracle.
 * Two refusals, after which the rest of the file cannot be trusted: a quote still open when the
 * text ends, and a record longer than MAX_RECORD_CHARS (reading on would hold the rest of the
 * file as one field).
 *
 * Lines without any quote are split in one step; the state machine handles the rest and carries
 * its state across chunks, so a huge field costs linear time.
 */

export interface CsvRecord {
  cells: string[];
  /** 1-based line on which the record starts. */
  line: number;
}

/** More characters than any lab export's row holds (a whole export of a round is smaller). */
export const MAX_RECORD_CHARS = 4_000_000;

/** A record longer than MAX_RECORD_CHARS: almost always a quote that is never closed. */
export class RecordTooLongError extends Error {
  override readonly name = 'RecordTooLongError';
  constructor(readonly line: number) {
    super(
      `the record starting on line ${line} runs past ${MAX_RECORD_CHARS.toLocaleString('en')} characters (a quote that is never closed?)`,
    );
  }
}

/** A quoted field still open at the end of the text. */
export class UnclosedQuoteError extends Error {
  override readonly name = 'UnclosedQuoteError';
  constructor(readonly line: number) {
    super(`a quoted field opened on line ${line} is never closed`);
  }
}

const QUOTE = 34;
const LF = 10;

// biome-ignore lint/suspicious/noConstEnum: inlined by the compiler on the per-byte path of the CSV reader
const enum Mode {
  /** At the start of a field. */
  FieldStart,
  /** Inside an unquoted field (quotes are text here). */
  Unquoted,
  /** Inside a quoted field. */
  Quoted,
  /** Just read a quote inside a quoted field: the next character decides what it was. */
  QuoteInQuoted,
}

/** Index of the next double quote at or after `from`, or the text's length when there is none. */
function quoteFrom(text: string, from: number): number {
  const at = text.indexOf('"', from);
  return at === -1 ? text.length : at;
}

function newlinesIn(text: string, from: number, to: number): number {
  let count = 0;
  for (let at = text.indexOf('\n', from); at !== -1 && at < to; at = text.indexOf('\n', at + 1)) count++;
  return count;
}

export class CsvRecordReader {
  private readonly delimiterCode: number;
  private mode = Mode.FieldStart;
  private cells: string[] = [];
  /** Text of the current field read so far (from earlier chunks or segments). */
  private field = '';
  /** The current record has begun (a field or delimiter was read since the last record ended). */
  private inRecord = false;
  /** Line of the next character to read. */
  private line: number;
  private recordLine: number;
  private quoteLine = 0;
  /** Lines still to skip (title lines and the header) before records begin. */
  private skipping: number;

  /**
   * @param delimiter one character
   * @param skipLines physical lines to skip first (title lines and the header row)
   */
  constructor(
    private readonly delimiter: string,
    skipLines: number,
  ) {
    if (delimiter.length !== 1 || delimiter === '"' || delimiter === '\n')
      throw new RangeError(
        `\`delimiter\` must be one character other than a quote or a line break, got ${JSON.stringify(delimiter)}`,
      );
    this.delimiterCode = delimiter.charCodeAt(0);
    this.skipping = skipLines;
    this.line = skipLines + 1;
    this.recordLine = this.line;
  }

  /**
   * Reads the next piece of text; complete records are appended to `out`.
   * @throws RecordTooLongError: memory stays bounded whatever the text holds
   */
  push(text: string, out: CsvRecord[]): void {
    this.read(text, out);
    if (
      this.inRecord &&
      this.field.length + this.cells.reduce((sum, cell) => sum + cell.length, 0) > MAX_RECORD_CHARS
    ) {
      throw new RecordTooLongError(this.recordLine);
    }
  }

  /** Passes over the title lines still to skip; returns where the text after them begins (its length when none is left). */
  private skipTitleLines(text: string): number {
    let at = 0;
    while (this.skipping > 0 && at < text.length) {
      const end = text.indexOf('\n', at);
      if (end === -1) return text.length;
      at = end + 1;
      this.skipping--;
    }
    return at;
  }

  /**
   * The record reader's state machine over one chunk. Kept as one loop on purpose: splitting the
   * cases into methods would add a call per field on the hottest path of ingest.
   */
  private read(text: string, out: CsvRecord[]): void {
    let at = this.skipTitleLines(text);
    const length = text.length;
    // Position of the next quote at or after `at`; `length` when there is none in this chunk (a
    // number, never -1, keeps the comparisons below on one fast path in V8).
    let nextQuote = quoteFrom(text, at);
    const delimiter = this.delimiter;
    const delimiterCode = this.delimiterCode;
    while (at < length) {
      if (this.mode === Mode.FieldStart && !this.inRecord) {
        // A whole line with no quote in it: one split.
        const lineEnd = text.indexOf('\n', at);
        if (lineEnd !== -1 && nextQuote > lineEnd) {
          out.push({ cells: text.slice(at, lineEnd).split(delimiter), line: this.line });
          at = lineEnd + 1;
          this.line++;
          this.recordLine = this.line;
          continue;
        }
      }
      switch (this.mode) {
        case Mode.FieldStart: {
          this.inRecord = true;
          if (text.charCodeAt(at) === QUOTE) {
            this.mode = Mode.Quoted;
            this.quoteLine = this.line;
            at++;
            break;
          }
          this.mode = Mode.Unquoted;
          break;
        }
        case Mode.Unquoted: {
          let end = at;
          while (end < length) {
            const code = text.charCodeAt(end);
            if (code === delimiterCode || code === LF) break;
            end++;
          }
          this.field = this.field === '' ? text.slice(at, end) : this.field + text.slice(at, end);
          if (end === length) return;
          at = this.endField(text.charCodeAt(end) === LF, out, end);
          break;
        }
        case Mode.Quoted: {
          if (nextQuote < at) nextQuote = quoteFrom(text, at);
          if (nextQuote === length) {
            this.line += newlinesIn(text, at, length);
            this.field += text.slice(at);
            return;
          }
          this.line += newlinesIn(text, at, nextQuote);
          this.field += text.slice(at, nextQuote);
          this.mode = Mode.QuoteInQuoted;
          at = nextQuote + 1;
          nextQuote = quoteFrom(text, at);
          break;
        }
        case Mode.QuoteInQuoted: {
          const code = text.charCodeAt(at);
          if (code === QUOTE) {
            this.field += '"';
            this.mode = Mode.Quoted;
            at++;
          } else if (code === delimiterCode || code === LF) {
            at = this.endField(code === LF, out, at);
          } else {
            // Text after a closing quote: the field is kept as written and runs on unquoted.
            this.field = `"${this.field}"`;
            this.mode = Mode.Unquoted;
          }
          break;
        }
      }
      if (nextQuote < at) nextQuote = quoteFrom(text, at);
    }
  }

  /** The text has ended: the last record, if any. @throws UnclosedQuoteError */
  end(out: CsvRecord[]): void {
    if (this.mode === Mode.Quoted) throw new UnclosedQuoteError(this.quoteLine);
    if (this.inRecord) {
      this.cells.push(this.field);
      out.push({ cells: this.cells, line: this.recordLine });
    }
    this.cells = [];
    this.field = '';
    this.inRecord = false;
    this.mode = Mode.FieldStart;
  }

  /** Ends the current field at `at` (a delimiter or LF); returns where reading goes on. */
  private endField(endsRecord: boolean, out: CsvRecord[], at: number): number {
    this.cells.push(this.field);
    this.field = '';
    this.mode = Mode.FieldStart;
    if (endsRecord) {
      out.push({ cells: this.cells, line: this.recordLine });
      this.cells = [];
      this.inRecord = false;
      this.line++;
      this.recordLine = this.line;
    }
    return at + 1;
  }
}
