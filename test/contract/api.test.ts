// The request schemas of the API routes: what each accepts, and the paths and messages of what it
// refuses (scenario fields as in a file, other body fields as body.…).

import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  captureRequestSchema, designRequestSchema, fitRequestSchema, parseRequest, simulateRequestSchema, sweepRequestSchema,
} from '../../src/contract/api.js';

const scenario = JSON.parse(readFileSync(new URL('../../scenarios/bias-48v.json', import.meta.url), 'utf8')) as Record<string, unknown>;
const issuesOf = (result: ReturnType<typeof parseRequest>): Array<[string, string]> => (result.ok ? [] : result.issues.map((i) => [i.pathKeys.join('/'), i.message]));

describe('API request schemas', () => {
  it('read a valid simulate body into a Scenario and its options', () => {
    const parsed = parseRequest(simulateRequestSchema, { scenario, variants: ['clamp'], window: { startSeconds: 0, endSeconds: 1e-6 }, columns: 10 });
    expect(parsed.ok).toBe(true);
    if (parsed.ok) {
      expect(parsed.request.scenario.switch.control.kind).toBe('peak-current');
      expect(parsed.request.variants).toEqual(['clamp']);
    }
  });

  it('refuse a body that is not an object, naming what the route wants', () => {
    expect(issuesOf(parseRequest(simulateRequestSchema, [1]))).toEqual([['body', 'expected a JSON object with a "scenario" field, found a list']]);
    expect(issuesOf(parseRequest(captureRequestSchema, 'x'))).toEqual([['body', 'expected a JSON object with a "capture" field, found string']]);
  });

  it('report every body field at fault with the scenario\'s own issues, all at once', () => {
    const issues = issuesOf(parseRequest(simulateRequestSchema, {
      scenario: { ...scenario, supply: { voltage: '60 apples' } }, variants: [], window: { startSeconds: 1, endSeconds: 0 }, columns: 9, extra: true,
    }));
    expect(issues.map(([path]) => path).sort()).toEqual(['body/columns', 'body/extra', 'body/variants', 'body/window', 'supply/voltage']);
    expect(issues).toContainEqual(['body/columns', 'expected a whole number from 10 to 4000, found 9']);
    expect(issues).toContainEqual(['body/variants', 'expected a non-empty list of bare, clamp, damped, found []']);
  });

  it('check each route\'s own fields: design columns, sweep lists, capture text and column, fit scenario', () => {
    expect(issuesOf(parseRequest(designRequestSchema, { scenario, columns: 'many' }))).toEqual([['body/columns', 'expected a whole number from 10 to 4000, found "many"']]);
    expect(issuesOf(parseRequest(sweepRequestSchema, { scenario, vary: 'clamp.resistance=1k..2k' }))).toEqual([['body/vary', 'expected a list of texts, found "clamp.resistance=1k..2k"']]);
    expect(issuesOf(parseRequest(sweepRequestSchema, { scenario, corners: 'yes' }))).toEqual([['body/corners', 'expected true or false, found "yes"']]);
    expect(issuesOf(parseRequest(captureRequestSchema, { column: 99 }))).toEqual([
      ['body/capture', "expected the capture's CSV text (a header block, then rows of time and voltage), found nothing"],
      ['body/column', "expected the drain column's name or its position (1–64, the time column is 1), found 99"],
    ]);
    const fit = issuesOf(parseRequest(fitRequestSchema, { capture: 't,v\n0,1' }));
    expect(fit).toEqual([['', 'expected an object, found nothing']]);
  });
});
