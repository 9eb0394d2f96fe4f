// The turn-on options of `jetlag compare` (clustering-spec.md section 13):
//   --turn-on T[,T2,...]   thresholds in GeV on the candidate's leading jet, one curve each
//   --turn-on-bin B        bin width in GeV of the reference quantity (default 5)
//   --turn-on-jet N        besides the leading jet, the same thresholds on the n-th jet
//   --turn-on-ht T[,...]   thresholds in GeV on HT, the scalar sum of jet pt above ptMin

import type { OptionSpec, ParsedArgs } from './args.js';
import { UsageError } from '../errors.js';
import { DEFAULT_TURN_ON_BIN_GEV, type TurnOnRequest } from '../validate/turn-on.js';

export const TURN_ON_OPTIONS: OptionSpec[] = [
  { name: 'turn-on', kind: 'string', argument: '<T[,T2,...]>', description: 'turn-on curves: efficiency of "candidate leading jet pt >= T GeV" against the reference leading jet pt, one curve per threshold (default: none)' },
  { name: 'turn-on-bin', kind: 'number', argument: '<GeV>', description: `bin width of the turn-on curves (default: ${DEFAULT_TURN_ON_BIN_GEV})` },
  { name: 'turn-on-jet', kind: 'integer', argument: '<n>', description: 'also the curves of the n-th jet (n >= 2) at the --turn-on thresholds, for multijet triggers (default: none)' },
  { name: 'turn-on-ht', kind: 'string', argument: '<T[,T2,...]>', description: 'turn-on curves of HT, the scalar sum of jet pt above --ptmin, at these thresholds in GeV (default: none)' },
];

function thresholdList(text: string, option: string, command: string): number[] {
  const parts = text.split(',');
  return parts.map((part) => {
    const value = Number(part);
    if (part.trim() === '' || !Number.isFinite(value) || value < 0) {
      throw new UsageError(`${command}: --${option} takes thresholds in GeV, finite and >= 0, separated by commas; got ${JSON.stringify(text)}`);
    }
    return value;
  });
}

/** The curves asked for, in the order: leading jet, n-th jet, HT; each by threshold as given. */
export function turnOnRequestsFrom(args: ParsedArgs, command: string): TurnOnRequest[] {
  const jetText = args.values['turn-on'] as string | undefined;
  const htText = args.values['turn-on-ht'] as string | undefined;
  const jet = args.values['turn-on-jet'] as number | undefined;
  const binWidth = (args.values['turn-on-bin'] as number | undefined) ?? DEFAULT_TURN_ON_BIN_GEV;
  if (!(binWidth > 0)) throw new UsageError(`${command}: --turn-on-bin must be > 0 GeV, got ${binWidth}`);
  if (jet !== undefined && !(jet >= 2)) throw new UsageError(`${command}: --turn-on-jet must be 2 or more (the leading jet's curves come with --turn-on alone), got ${jet}`);
  if (jet !== undefined && jetText === undefined) throw new UsageError(`${command}: --turn-on-jet needs the thresholds of --turn-on`);
  if (args.values['turn-on-bin'] !== undefined && jetText === undefined && htText === undefined) {
    throw new UsageError(`${command}: --turn-on-bin needs --turn-on or --turn-on-ht`);
  }
  const requests: TurnOnRequest[] = [];
  const jetThresholds = jetText === undefined ? [] : thresholdList(jetText, 'turn-on', command);
  for (const threshold of jetThresholds) requests.push({ observable: 'jet1', threshold, binWidth });
  if (jet !== undefined) for (const threshold of jetThresholds) requests.push({ observable: 'jetN', jet, threshold, binWidth });
  if (htText !== undefined) for (const threshold of thresholdList(htText, 'turn-on-ht', command)) requests.push({ observable: 'ht', threshold, binWidth });
  return requests;
}
