// Reads an oscilloscope CSV export line by line from a stream: a header block of any length, then
// data rows of a time column and voltage columns (or voltage columns alone with the sample
// interval in the header), separated by commas, semicolons or tabs, with a decimal point or (when
// the separator is not a comma) a decimal comma. Only the time and the chosen drain column are
// kept, in Float64Arrays, so memory is 16 bytes per sample whatever the width of the file.

import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import { StringDecoder } from 'node:string_decoder';
import { INDEX_NAME, TIME_NAME, readHeaderLine, unitInName, voltageUnitInName, type HeaderInfo } from './capture-header.js';
import { MAX_CAPTURE_BYTES, MAX_CAPTURE_SAMPLES, MAX_COLUMNS, MAX_LINE_CHARS } from './capture-limits.js';

/** A capture that cannot be read; `flag` names the command-line flag at fault, if one is. */
export class CaptureError extends Error {
  constructor(message: string, readonly flag?: string) { super(message); }
}

export interface Capture {
  timeSeconds: Float64Array;
  volts: Float64Array;
  /** Name of the column read as the drain (from the header, or "column N"). */
  columnName: string;
  /** Names of all voltage columns. */
  voltageColumns: string[];
  /** How time was obtained. */
  timeSource: 'column' | 'sample interval';
  delimiter: ',' | ';' | '\t';
  decimalComma: boolean;
}

export interface ReadCaptureOptions {
  /** The drain column: a name from the header, or its 1-based position in the row (time column included). */
  column?: string;
  /** Overrides MAX_CAPTURE_BYTES (tests). */
  maxBytes?: number;
  maxSamples?: number;
}

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/** A field as a number, or NaN. A decimal comma is accepted when the separator is not a comma. */
function parseField(field: string, decimalComma: boolean): number {
  let s = field.trim();
  if (s.length >= 2 && s.startsWith('"') && s.endsWith('"')) s = s.slice(1, -1).trim();
  if (decimalComma) s = s.replace(',', '.');
  return NUMBER.test(s) ? Number(s) : NaN;
}

function splitFields(line: string, delimiter: string): string[] {
  const fields = line.split(delimiter);
  // A trailing separator (some scopes end every row with one) is not a column.
  while (fields.length > 1 && fields[fields.length - 1]!.trim() === '') fields.pop();
  return fields;
}

function delimiterOf(line: string): ',' | ';' | '\t' {
  if (line.includes(';')) return ';';
  if (line.includes('\t')) return '\t';
  return ',';
}

const unquote = (s: string): string => s.trim().replace(/^"(.*)"$/, '$1').trim();
const bareName = (s: string): string => unquote(s).replace(/\s*[([].*?[)\]]\s*/g, '').trim().toLowerCase();

interface Layout {
  timeColumn: number | null;
  timeScale: number;
  /** Volts per unit of the drain column (a unit in its name, else the header's, else V). */
  voltScale: number;
  interval: number;
  start: number;
  drainColumn: number;
  columnName: string;
  voltageColumns: string[];
  fieldCount: number;
}

function decideLayout(fieldCount: number, names: string[] | null, info: HeaderInfo, columnSpec: string | undefined, line: number): Layout {
  const interval = info.sampleIntervalSeconds;
  let timeColumn: number | null;
  let firstVoltage: number;
  if (names && TIME_NAME.test(unquote(names[0]!))) {
    timeColumn = 0; firstVoltage = 1;
  } else if (interval !== undefined && names && INDEX_NAME.test(unquote(names[0]!))) {
    timeColumn = null; firstVoltage = 1;
  } else if (interval !== undefined && (names || fieldCount === 1)) {
    timeColumn = null; firstVoltage = 0;
  } else if (fieldCount === 1) {
    throw new CaptureError(`line ${line}: one column of numbers and no sample interval in the header; expected a time column and a voltage column, or a header line such as "Sample Interval,1e-9"`);
  } else {
    timeColumn = 0; firstVoltage = 1;
  }
  if (firstVoltage >= fieldCount) throw new CaptureError(`line ${line}: expected at least one voltage column after the time column, found ${fieldCount} column(s)`);
  const nameOf = (j: number): string => (names ? unquote(names[j]!) || `column ${j + 1}` : `column ${j + 1}`);
  const voltageIndices = Array.from({ length: fieldCount - firstVoltage }, (_, k) => k + firstVoltage);
  const voltageColumns = voltageIndices.map(nameOf);
  let drainColumn: number;
  const choices = `${voltageColumns.join(', ')} (or a column number ${firstVoltage + 1}${fieldCount > firstVoltage + 1 ? `–${fieldCount}` : ''})`;
  if (columnSpec === undefined) {
    if (voltageIndices.length > 1) throw new CaptureError(`the capture has ${voltageIndices.length} voltage columns; name the drain with --column, one of ${choices}`, '--column');
    drainColumn = voltageIndices[0]!;
  } else if (/^\s*\d+\s*$/.test(columnSpec)) {
    const position = Number(columnSpec);
    if (!voltageIndices.includes(position - 1)) throw new CaptureError(`expected one of ${choices}, found ${columnSpec.trim()}${timeColumn === position - 1 ? ' (the time column)' : ''}`, '--column');
    drainColumn = position - 1;
  } else {
    const wanted = columnSpec.trim().toLowerCase();
    const found = voltageIndices.find((j) => nameOf(j).toLowerCase() === wanted || bareName(nameOf(j)) === bareName(columnSpec));
    if (found === undefined) throw new CaptureError(`expected one of ${choices}, found "${columnSpec}"`, '--column');
    drainColumn = found;
  }
  const timeScale = timeColumn === null ? 1 : (names ? unitInName(unquote(names[0]!)) : undefined) ?? info.timeUnitSeconds ?? 1;
  const voltScale = (names ? voltageUnitInName(unquote(names[drainColumn]!)) : undefined) ?? info.voltageUnitVolts ?? 1;
  return {
    timeColumn, timeScale, voltScale, interval: interval ?? NaN, start: info.startSeconds ?? 0,
    drainColumn, columnName: nameOf(drainColumn), voltageColumns, fieldCount,
  };
}

export async function readCapture(file: string, options: ReadCaptureOptions = {}): Promise<Capture> {
  const maxBytes = options.maxBytes ?? MAX_CAPTURE_BYTES;
  const maxSamples = options.maxSamples ?? MAX_CAPTURE_SAMPLES;
  let size: number;
  try {
    const s = await stat(file);
    if (!s.isFile()) throw new CaptureError('expected a capture file, found a directory or device');
    size = s.size;
  } catch (error) {
    if (error instanceof CaptureError) throw error;
    throw new CaptureError(`expected a readable capture file, found ${(error as NodeJS.ErrnoException).code ?? 'an error'}`);
  }
  if (size > maxBytes) throw new CaptureError(`the file is ${size} bytes; captures are read up to ${maxBytes} bytes (decimate on the scope, or export a shorter record)`);
  if (size === 0) throw new CaptureError('the file is empty; expected a CSV capture');

  const lines = captureLines(size, maxSamples, options.column);
  let bytesSeen = 0;
  const decoder = new StringDecoder('utf8');
  let carry = '';
  try {
    for await (const chunk of createReadStream(file, { highWaterMark: 1 << 20 })) {
      bytesSeen += (chunk as Buffer).length;
      const text = carry + decoder.write(chunk as Buffer);
      let start = 0;
      for (let nl = text.indexOf('\n'); nl >= 0; nl = text.indexOf('\n', start)) {
        if (nl - start > MAX_LINE_CHARS) throw new CaptureError(`line ${lines.lineNumber + 1} is longer than ${MAX_LINE_CHARS} characters; expected a CSV capture`);
        lines.line(text.slice(start, nl));
        start = nl + 1;
      }
      carry = text.slice(start);
      if (carry.length > MAX_LINE_CHARS) throw new CaptureError(`line ${lines.lineNumber + 1} is longer than ${MAX_LINE_CHARS} characters; expected a CSV capture`);
    }
  } catch (error) {
    if (error instanceof CaptureError) throw error;
    throw new CaptureError(`cannot read the file (${(error as NodeJS.ErrnoException).code ?? (error as Error).message}) after ${bytesSeen} bytes`);
  }
  carry += decoder.end();
  if (carry !== '') lines.line(carry);

  return lines.finish();
}

/**
 * A capture already in memory (the page sends the file's text): the same reading, validation and
 * messages as `readCapture`, with its budgets checked on the text's size before any line is read.
 */
export function readCaptureText(text: string, options: ReadCaptureOptions = {}): Capture {
  const maxBytes = options.maxBytes ?? MAX_CAPTURE_BYTES;
  const maxSamples = options.maxSamples ?? MAX_CAPTURE_SAMPLES;
  const size = Buffer.byteLength(text, 'utf8');
  if (size > maxBytes) throw new CaptureError(`the capture is ${size} bytes; captures are read up to ${maxBytes} bytes here (decimate on the scope, or export a shorter record)`);
  if (text.trim() === '') throw new CaptureError('the capture is empty; expected a CSV capture');
  const lines = captureLines(size, maxSamples, options.column);
  let start = 0;
  for (let nl = text.indexOf('\n'); nl >= 0; nl = text.indexOf('\n', start)) {
    if (nl - start > MAX_LINE_CHARS) throw new CaptureError(`line ${lines.lineNumber + 1} is longer than ${MAX_LINE_CHARS} characters; expected a CSV capture`);
    lines.line(text.slice(start, nl));
    start = nl + 1;
  }
  if (text.length - start > MAX_LINE_CHARS) throw new CaptureError(`line ${lines.lineNumber + 1} is longer than ${MAX_LINE_CHARS} characters; expected a CSV capture`);
  if (start < text.length) lines.line(text.slice(start));
  return lines.finish();
}

/**
 * The line-by-line reader shared by the file and the text entry points: `size` (bytes) sizes the
 * arrays up front, so a long capture is not copied as it grows.
 */
function captureLines(size: number, maxSamples: number, column: string | undefined): { line: (raw: string) => void; finish: () => Capture; readonly lineNumber: number } {
  const info: HeaderInfo = {};
  let lastHeaderFields: string[] | null = null;
  let layout: Layout | null = null;
  let delimiter: ',' | ';' | '\t' = ',';
  let decimalComma = false;
  let time = new Float64Array(0), volts = new Float64Array(0);
  let count = 0;
  let lineNumber = 0;

  const grow = (needed: number): void => {
    if (needed <= time.length) return;
    const capacity = Math.min(maxSamples, Math.max(needed, Math.ceil(time.length * 1.5)));
    const t2 = new Float64Array(capacity), v2 = new Float64Array(capacity);
    t2.set(time.subarray(0, count));
    v2.set(volts.subarray(0, count));
    time = t2; volts = v2;
  };

  const handleLine = (raw: string): void => {
    lineNumber++;
    const line = raw.endsWith('\r') ? raw.slice(0, -1) : raw;
    if (lineNumber === 1 && line.startsWith('\uFEFF')) return handleData(line.slice(1));
    return handleData(line);
  };
  const handleData = (line: string): void => {
    if (line.trim() === '') return;
    if (layout === null) {
      const d = delimiterOf(line);
      const comma = d !== ',';
      const fields = splitFields(line, d);
      const numbers = fields.map((f) => parseField(f, comma));
      if (fields.length > MAX_COLUMNS) throw new CaptureError(`line ${lineNumber}: ${fields.length} columns; at most ${MAX_COLUMNS} are read`);
      if (!numbers.every((x) => Number.isFinite(x))) {
        readHeaderLine(fields, info);
        lastHeaderFields = fields;
        return;
      }
      delimiter = d;
      decimalComma = comma && fields.some((f) => f.includes(','));
      const names = lastHeaderFields !== null && (lastHeaderFields as string[]).length === fields.length ? lastHeaderFields : null;
      layout = decideLayout(fields.length, names, info, column, lineNumber);
      // Size the arrays from the file size and this row's length, so a long capture is not copied as it grows.
      grow(Math.min(maxSamples, Math.ceil((size / (line.length + 1)) * 1.1) + 1024));
    }
    const fields = splitFields(line, delimiter);
    if (fields.length !== layout.fieldCount) {
      throw new CaptureError(`line ${lineNumber}: expected ${layout.fieldCount} fields separated by "${delimiter === '\t' ? 'tab' : delimiter}" like the first data row, found ${fields.length}: "${line.slice(0, 80)}"`);
    }
    const v = parseField(fields[layout.drainColumn]!, decimalComma || delimiter !== ',');
    if (!Number.isFinite(v)) throw new CaptureError(`line ${lineNumber}: expected a number in column "${layout.columnName}", found "${fields[layout.drainColumn]!.trim().slice(0, 40)}"`);
    let t: number;
    if (layout.timeColumn === null) {
      t = layout.start + count * layout.interval;
    } else {
      const raw = parseField(fields[layout.timeColumn]!, decimalComma || delimiter !== ',');
      if (!Number.isFinite(raw)) throw new CaptureError(`line ${lineNumber}: expected a number in the time column, found "${fields[layout.timeColumn]!.trim().slice(0, 40)}"`);
      t = raw * layout.timeScale;
      if (count > 0 && !(t > time[count - 1]!)) {
        throw new CaptureError(`line ${lineNumber} (data row ${count + 1}): time does not increase (${t} s after ${time[count - 1]!} s); expected strictly increasing time`);
      }
    }
    if (count >= maxSamples) throw new CaptureError(`more than ${maxSamples} samples; captures are read up to ${maxSamples} samples (decimate on the scope, or export a shorter record)`);
    grow(count + 1);
    time[count] = t;
    volts[count] = v * layout.voltScale;
    count++;
  };

  const finish = (): Capture => {
    if (layout === null) throw new CaptureError(`no numeric data in ${lineNumber} line(s); expected rows of numbers (time, voltage…) after the header`);
    const finalLayout: Layout = layout;
    if (count < 2) throw new CaptureError(`a single sample (line ${lineNumber}); a capture needs many samples over at least one turn-off and its ring`);
    return {
      timeSeconds: time.subarray(0, count),
      volts: volts.subarray(0, count),
      columnName: finalLayout.columnName,
      voltageColumns: finalLayout.voltageColumns,
      timeSource: finalLayout.timeColumn === null ? 'sample interval' : 'column',
      delimiter, decimalComma,
    };
  };
  return { line: handleLine, finish, get lineNumber() { return lineNumber; } };
}
