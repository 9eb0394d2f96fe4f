// The window finder as an engine of `jetlag run` (--engine window[:W:SEEDET]): how the option
// is read, and the clusterer the workers make from its name.

import { describe, expect, it } from 'vitest';
import { parseArgs } from '../host/cli/args.js';
import { runOptionsFrom, spec } from '../host/cli/commands/run.js';
import { makeClusterer } from '../host/clustering/clusterers.js';
import { WindowFinder, windowSettingsOfName } from '../host/clustering/window-finder.js';
import { UsageError } from '../host/errors.js';
import { DEFAULT_GRID, DEFAULT_SETTINGS } from '../host/types.js';

const options = (...argv: string[]) => runOptionsFrom(parseArgs(spec, ['events.jetlag', ...argv]));

describe('run --engine window', () => {
  it('names the engine after its settings, defaults 9 and 5', () => {
    expect(options('--engine', 'window').engine).toBe('window-9-5');
    expect(options('--engine', 'window:5:2.5').engine).toBe('window-5-2.5');
  });

  it('turns the bit-exact check off, since there is no reference of the same algorithm', () => {
    expect(options('--engine', 'window').check?.fraction).toBe(0);
    expect(options('--engine', 'window', '--check', 'none').check?.fraction).toBe(0);
  });

  it.each([['--check', 'all'], ['--check', '0.5']])('refuses %s %s as bad usage', (...check) => {
    expect(() => options('--engine', 'window', ...check)).toThrow(UsageError);
  });

  it.each(['window:4', 'windows', 'fast'])('refuses --engine %s as bad usage', (engine) => {
    expect(() => options('--engine', engine)).toThrow(UsageError);
  });

  it('leaves wasm and reference as they were', () => {
    expect(options().engine).toBe('wasm');
    expect(options('--engine', 'reference').engine).toBe('reference');
  });
});

describe('the window finder from its engine name', () => {
  it('reads the settings back from the name', () => {
    expect(windowSettingsOfName('window-7-1.5')).toEqual({ windowTowers: 7, seedEt: 1.5 });
    expect(windowSettingsOfName('wasm')).toBeNull();
  });

  it('is what makeClusterer gives the workers', () => {
    const clusterer = makeClusterer('window-7-1.5', DEFAULT_GRID, DEFAULT_SETTINGS);
    expect(clusterer).toBeInstanceOf(WindowFinder);
    expect((clusterer as WindowFinder).window).toEqual({ windowTowers: 7, seedEt: 1.5 });
    expect(clusterer.name).toBe('window-7-1.5');
  });
});
