import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { CaptureError, readCapture, type Capture } from '../../src/capture/read-capture.js';

// Layouts written by hand after the shapes of common scope exports (from memory: a key/value
// header block, then a column-name row, then data; European locales with ';' and a decimal comma).
// Every expected number below is the value typed into the file, converted by hand.

let dir: string;
beforeAll(async () => { dir = await mkdtemp(join(tmpdir(), 'flyclamp-capture-')); });
afterAll(async () => { if (dir) await rm(dir, { recursive: true, force: true }); });

let serial = 0;
async function file(text: string): Promise<string> {
  const path = join(dir, `capture-${serial++}.csv`);
  await writeFile(path, text, 'utf8');
  return path;
}

async function failure(text: string, column?: string, extra: { maxBytes?: number; maxSamples?: number } = {}): Promise<CaptureError> {
  try {
    await readCapture(await file(text), { ...(column !== undefined ? { column } : {}), ...extra });
  } catch (error) {
    if (error instanceof CaptureError) return error;
    throw error;
  }
  throw new Error('expected the capture to be refused');
}

const values = (a: Float64Array): number[] => Array.from(a);

describe('readCapture layouts', () => {
  it('time in s and one voltage column, comma-separated, decimal point', async () => {
    const c = await readCapture(await file('Time (s),Drain (V)\n0,1.5\n1e-9,2.5\n2e-9,-3.25\n'));
    expect(values(c.timeSeconds)).toEqual([0, 1e-9, 2e-9]);
    expect(values(c.volts)).toEqual([1.5, 2.5, -3.25]);
    expect(c.columnName).toBe('Drain (V)');
    expect(c.timeSource).toBe('column');
  });

  it('a long key/value header block, two channels, the drain named with --column (and by number)', async () => {
    const header = ['Model,Scope 4000', 'Firmware,1.2.3', 'Record Length,3', 'Sample Interval,1e-09', 'Trigger Point,1', 'Vertical Units,V', ...Array.from({ length: 40 }, (_, k) => `Note ${k},x`)];
    const text = `${header.join('\n')}\nTIME,CH1,CH2\n-1e-9,0.1,10\n0,0.2,20\n1e-9,0.3,30\n`;
    const c: Capture = await readCapture(await file(text), { column: 'ch2' });
    expect(values(c.volts)).toEqual([10, 20, 30]);
    expect(values(c.timeSeconds)).toEqual([-1e-9, 0, 1e-9]);
    expect(c.voltageColumns).toEqual(['CH1', 'CH2']);
    const byNumber = await readCapture(await file(text), { column: '2' });
    expect(values(byNumber.volts)).toEqual([0.1, 0.2, 0.3]);
  });

  it('semicolon-separated with a decimal comma and the time unit in the column name (µs)', async () => {
    const c = await readCapture(await file('Time [us];Drain [V]\r\n0,000;12,5\r\n0,002;13,75\r\n0,004;-0,5\r\n'));
    // 0,002 µs = 2 ns and 0,004 µs = 4 ns, to the rounding of one multiplication.
    expect(c.timeSeconds[0]).toBe(0);
    expect(Math.abs(c.timeSeconds[1]! - 2e-9)).toBeLessThan(1e-24);
    expect(Math.abs(c.timeSeconds[2]! - 4e-9)).toBeLessThan(1e-24);
    expect(values(c.volts)).toEqual([12.5, 13.75, -0.5]);
    expect(c.decimalComma).toBe(true);
    expect(c.delimiter).toBe(';');
  });

  it('voltages alone, time from the sample interval and start in the header ("key: value" lines)', async () => {
    const c = await readCapture(await file('Sample Interval: 2 ns\nStart Time: -4 ns\nCH1\n5\n6\n7\n'));
    expect(c.timeSource).toBe('sample interval');
    expect(values(c.timeSeconds).map((t) => Math.round(t * 1e12))).toEqual([-4000, -2000, 0]);
    expect(values(c.volts)).toEqual([5, 6, 7]);
  });

  it('an index column with a sample rate in the header (time = n / rate)', async () => {
    const c = await readCapture(await file('Sample Rate,2.5GS/s\nIndex,CH1\n0,1\n1,2\n2,4\n'));
    expect(c.timeSeconds[2]).toBeCloseTo(2 / 2.5e9, 20);
    expect(values(c.volts)).toEqual([1, 2, 4]);
  });

  it('voltages in mV, stated in the column name or in the header', async () => {
    const named = await readCapture(await file('Time (s),CH1 (mV)\n0,1500\n1e-9,-250\n'));
    expect(values(named.volts)).toEqual([1.5, -0.25]);
    const header = await readCapture(await file('Vertical Units,mV\nTime,CH1\n0,1500\n1e-9,-250\n'));
    expect(values(header.volts)).toEqual([1.5, -0.25]);
  });

  it('tab-separated, a header-stated time unit (ns), a trailing separator, a byte-order mark and no names', async () => {
    const c = await readCapture(await file('\uFEFFHorizontal Units\tns\n0\t1\t\n1\t2\t\n2\t3\t\n'));
    expect(c.timeSeconds[2]).toBeCloseTo(2e-9, 20);
    expect(values(c.volts)).toEqual([1, 2, 3]);
  });
});

describe('readCapture refuses bad files with a message naming the problem', () => {
  it('no numeric data', async () => {
    expect((await failure('Model,X\nTime,CH1\nfoo,bar\n')).message).toMatch(/no numeric data/);
  });
  it('time that does not increase, naming the line', async () => {
    const e = await failure('Time,CH1\n0,1\n1e-9,2\n2e-9,3\n1.5e-9,4\n');
    expect(e.message).toMatch(/line 5 \(data row 4\): time does not increase/);
  });
  it('repeated time (printed with too few digits)', async () => {
    expect((await failure('Time,CH1\n0,1\n0,2\n')).message).toMatch(/line 3 .*time does not increase/);
  });
  it('a single sample', async () => {
    expect((await failure('Time,CH1\n0,1\n')).message).toMatch(/a single sample/);
  });
  it('an unknown column name and a column number that is the time column', async () => {
    const text = 'Time,CH1,CH2\n0,1,2\n1,2,3\n';
    const named = await failure(text, 'CH4');
    expect(named.flag).toBe('--column');
    expect(named.message).toMatch(/expected one of CH1, CH2 .*found "CH4"/);
    expect((await failure(text, '1')).message).toMatch(/found 1 \(the time column\)/);
  });
  it('several voltage columns and no --column', async () => {
    const e = await failure('Time,CH1,CH2\n0,1,2\n1,2,3\n');
    expect(e.flag).toBe('--column');
    expect(e.message).toMatch(/2 voltage columns/);
  });
  it('a row with a different number of fields, and a non-number in the drain column', async () => {
    expect((await failure('Time,CH1\n0,1\n1,2,3\n')).message).toMatch(/line 3: expected 2 fields/);
    expect((await failure('Time,CH1\n0,1\n1,OVER\n')).message).toMatch(/line 3: expected a number in column "CH1", found "OVER"/);
  });
  it('one column and no sample interval', async () => {
    expect((await failure('1\n2\n3\n')).message).toMatch(/no sample interval/);
  });
  it('a file over the size budget, an empty file, a missing file, an endless line', async () => {
    expect((await failure('Time,CH1\n0,1\n1,2\n', undefined, { maxBytes: 10 })).message).toMatch(/captures are read up to 10 bytes/);
    expect((await failure('')).message).toMatch(/empty/);
    await expect(readCapture(join(dir, 'absent.csv'))).rejects.toThrow(/ENOENT/);
    expect((await failure(`${'x'.repeat(70_000)}\n`)).message).toMatch(/longer than 65536 characters/);
  });
  it('more samples than the sample budget', async () => {
    expect((await failure('Time,CH1\n0,1\n1,2\n2,3\n', undefined, { maxSamples: 2 })).message).toMatch(/more than 2 samples/);
  });
});
