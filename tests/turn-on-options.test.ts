// The turn-on options of `jetlag compare`, read by a pure function.

import { describe, expect, it } from 'vitest';
import { UsageError } from '../host/errors.js';
import type { ParsedArgs } from '../host/cli/args.js';
import { turnOnRequestsFrom } from '../host/cli/turn-on-options.js';

const args = (values: ParsedArgs['values']): ParsedArgs => ({ positionals: [], values, help: false });

describe('turnOnRequestsFrom', () => {
  it('asks for nothing without turn-on options', () => {
    expect(turnOnRequestsFrom(args({}), 'compare')).toEqual([]);
  });

  it('makes one leading-jet curve per threshold with the default 5 GeV bins', () => {
    expect(turnOnRequestsFrom(args({ 'turn-on': '40,60.5' }), 'compare')).toEqual([
      { observable: 'jet1', threshold: 40, binWidth: 5 },
      { observable: 'jet1', threshold: 60.5, binWidth: 5 },
    ]);
  });

  it('adds the n-th jet at the same thresholds and HT at its own', () => {
    const requests = turnOnRequestsFrom(args({ 'turn-on': '30', 'turn-on-jet': 4, 'turn-on-ht': '200,300', 'turn-on-bin': 10 }), 'compare');
    expect(requests).toEqual([
      { observable: 'jet1', threshold: 30, binWidth: 10 },
      { observable: 'jetN', jet: 4, threshold: 30, binWidth: 10 },
      { observable: 'ht', threshold: 200, binWidth: 10 },
      { observable: 'ht', threshold: 300, binWidth: 10 },
    ]);
  });

  it.each([
    [{ 'turn-on': '' }],
    [{ 'turn-on': '40,' }],
    [{ 'turn-on': '-5' }],
    [{ 'turn-on': 'abc' }],
    [{ 'turn-on': '40', 'turn-on-bin': 0 }],
    [{ 'turn-on-bin': 5 }],
    [{ 'turn-on-jet': 3 }],
    [{ 'turn-on': '40', 'turn-on-jet': 1 }],
    [{ 'turn-on-ht': '1e999' }],
  ])('rejects %j as bad usage', (values) => {
    expect(() => turnOnRequestsFrom(args(values), 'compare')).toThrow(UsageError);
  });
});
