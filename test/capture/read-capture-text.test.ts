import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { CaptureError, readCapture, readCaptureText, type ReadCaptureOptions } from '../../src/capture/read-capture.js';

// The text entry point (what the server reads from the page's request) against the file reader:
// the same samples from the same text, the same refusal with the same message. The expected
// values are the numbers typed into the texts below.

let dir: string;
beforeAll(async () => { dir = await mkdtemp(join(tmpdir(), 'flyclamp-capture-text-')); });
afterAll(async () => { if (dir) await rm(dir, { recursive: true, force: true }); });

let serial = 0;
async function both(text: string, options: ReadCaptureOptions = {}): Promise<Array<{ samples?: number[][]; message?: string }>> {
  const path = join(dir, `c-${serial++}.csv`);
  await writeFile(path, text, 'utf8');
  const outcome = async (read: () => Promise<{ timeSeconds: Float64Array; volts: Float64Array }>): Promise<{ samples?: number[][]; message?: string }> => {
    try {
      const c = await read();
      return { samples: [Array.from(c.timeSeconds), Array.from(c.volts)] };
    } catch (error) {
      if (error instanceof CaptureError) return { message: error.message };
      throw error;
    }
  };
  return [await outcome(() => readCapture(path, options)), await outcome(async () => readCaptureText(text, options))];
}

describe('readCaptureText', () => {
  it('reads a header block, a semicolon layout with decimal commas and µs, and CRLF line ends as the file reader does', async () => {
    const [file, text] = await both('\uFEFFModel;X\r\nTime [us];Drain [V]\r\n0,5;12,5\r\n1,5;13\r\n2,5;-1,25');
    expect(text).toEqual(file);
    // Time is the typed µs times 1e-6 (within a rounding of the product).
    [0.5e-6, 1.5e-6, 2.5e-6].forEach((t, k) => expect(text!.samples![0]![k]).toBeCloseTo(t, 20));
    expect(text!.samples![1]).toEqual([12.5, 13, -1.25]);
  });

  it.each([
    ['a non-number in the drain column', 'Time,CH1\n0,1\n1e-9,2\n2e-9,oops\n', {}, 'line 4: expected a number in column "CH1", found "oops"'],
    ['time that goes back', 'Time,CH1\n0,1\n2e-9,2\n1e-9,3\n', {}, /^line 4 \(data row 3\): time does not increase/],
    ['no numbers at all', 'just,a\nheader,block\n', {}, 'no numeric data in 2 line(s); expected rows of numbers (time, voltage…) after the header'],
    ['a single sample', 'Time,CH1\n0,1\n', {}, /^a single sample/],
    ['an unknown column', 'Time,CH1,CH2\n0,1,2\n1e-9,2,3\n', { column: 'CH7' }, 'expected one of CH1, CH2 (or a column number 2–3), found "CH7"'],
    ['more samples than allowed', 'Time,CH1\n0,1\n1e-9,2\n2e-9,3\n', { maxSamples: 2 }, /^more than 2 samples/],
  ] as const)('refuses %s with the file reader\'s message', async (_what, csv, options, expected) => {
    const [file, text] = await both(csv, options);
    expect(text!.message).toBe(file!.message);
    if (typeof expected === 'string') expect(text!.message).toBe(expected);
    else expect(text!.message).toMatch(expected);
  });

  it('refuses an empty text and one over the byte budget before reading a line', () => {
    expect(() => readCaptureText('  \n')).toThrow('the capture is empty; expected a CSV capture');
    expect(() => readCaptureText('Time,CH1\n0,1\n1e-9,2\n', { maxBytes: 10 })).toThrow(/^the capture is 20 bytes; captures are read up to 10 bytes/);
  });
});
