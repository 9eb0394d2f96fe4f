// The report: one self-contained HTML file (styles inline, charts as inline SVG, no script, no
// link, no font or image from anywhere) from run summaries and compare documents.
//
//   buildReport({ inputs, displayEvent?, notes? }) -> HTML text
//   findDisplay(inputs, chosen?) -> the event display of the first input that can have one
//
// Runs are shown side by side: one chart per figure with a series per run, one table column per
// run. Each compare gets its own section. Every text taken from an input is escaped.

import { escapeHtml } from './escape.js';
import { cumulativeCurve, findRateChart, openLoopBreakdown, scalingChart, serviceHistogram, workersChart } from './run-charts.js';
import { conditionLines, countsTable, latencyTable, settingsTable } from './run-tables.js';
import { compareSection } from './compare-section.js';
import { eventDisplayFigure, type DisplayEvent } from './event-display.js';
import { compareDisplay, runDisplay } from './display-event.js';
import { distinctNames, type CompareView, type ReportInput, type RunView } from './report-data.js';
import { PAGE_STYLE } from './page-style.js';
import { VERSION } from '../version.js';
import { DEFAULT_SETTINGS, type ClusterSettings, type Grid } from '../types.js';

export interface ReportContent {
  inputs: ReportInput[];
  /** the event display, shown in the section of the input it belongs to (by index) */
  display?: { input: number; event: DisplayEvent } | null;
  /** lines for the page's head (why there is no event display, and the like) */
  notes?: string[];
}

async function runSection(runs: RunView[], display: string): Promise<string> {
  const charts = await Promise.all([serviceHistogram(runs), cumulativeCurve(runs), openLoopBreakdown(runs), scalingChart(runs), workersChart(runs), findRateChart(runs)]);
  const title = runs.length === 1 ? `Run: ${runs[0].name}` : `${runs.length} runs side by side`;
  return [
    `<section class="run"><h2>${escapeHtml(title)}</h2>`,
    conditionLines(runs),
    '<div class="tables">', latencyTable(runs), '</div>',
    ...charts.slice(0, 4),
    display,
    ...charts.slice(4),
    '<h3>Settings</h3><div class="tables">', settingsTable(runs), '</div>',
    '<h3>Counts</h3><div class="tables">', countsTable(runs), '</div>',
    '</section>',
  ].join('\n');
}

function invented(inputs: ReportInput[]): boolean {
  return inputs.some((input) => input.kind === 'run' && /invented|toy/i.test(String(input.configuration.input?.label ?? '')));
}

export async function buildReport(content: ReportContent): Promise<string> {
  const inputs = distinctNames(content.inputs);
  const runs = inputs.filter((input): input is RunView => input.kind === 'run');
  const displayAt = content.display ?? null;
  const displayHtml = displayAt ? await eventDisplayFigure(displayAt.event) : '';
  const sections: string[] = [];
  if (runs.length > 0) {
    const shown = displayAt !== null && inputs[displayAt.input]?.kind === 'run';
    sections.push(await runSection(runs, shown ? displayHtml : ''));
  }
  for (let k = 0; k < inputs.length; k++) {
    const input = inputs[k];
    if (input.kind === 'compare') sections.push(await compareSection(input, displayAt?.input === k ? displayHtml : ''));
  }
  const notes = [...(content.notes ?? [])];
  if (invented(inputs)) notes.unshift('The events are invented (toy generator, fictional Halden ring collider), not physics data.');
  const title = inputs.map((input) => input.name).join(' · ');
  return [
    '<!DOCTYPE html>',
    '<html lang="en"><head><meta charset="utf-8">',
    '<meta name="viewport" content="width=device-width, initial-scale=1">',
    // nothing may be loaded from anywhere: the page is whole as it is
    '<meta http-equiv="Content-Security-Policy" content="default-src \'none\'; style-src \'unsafe-inline\'; img-src data:">',
    `<title>jetlag report: ${escapeHtml(title)}</title>`,
    `<style>${PAGE_STYLE}</style>`,
    '</head><body>',
    `<header><h1>jetlag report</h1><p class="lead">${escapeHtml(title)}</p>`,
    notes.length > 0 ? `<ul class="notes">${notes.map((note) => `<li>${escapeHtml(note)}</li>`).join('')}</ul>` : '',
    '</header>',
    '<main>', ...sections, '</main>',
    `<footer>Made by jetlag ${escapeHtml(VERSION)}. Charts drawn with vega-lite and vega; latency in microseconds (µs), energies in GeV, angles in radians.</footer>`,
    '</body></html>',
    '',
  ].join('\n');
}

/** Settings of a run or compare document, with the defaults under whatever it leaves out. */
function settingsOf(value: Partial<ClusterSettings> | undefined): ClusterSettings {
  return { ...DEFAULT_SETTINGS, ...(value ?? {}) } as ClusterSettings;
}

function gridOf(value: unknown): Grid | undefined {
  const grid = value as Grid | undefined;
  return grid && typeof grid.etaBins === 'number' ? { etaMin: grid.etaMin, etaMax: grid.etaMax, etaBins: grid.etaBins, phiBins: grid.phiBins } : undefined;
}

/**
 * The event display of the first input that can have one: `chosen` (--display), else a run's
 * slowest event or a compare's worst. Reads the input's event file (and candidate) again; when
 * that fails the display is left out and `note` says why.
 */
export async function findDisplay(inputs: ReportInput[], chosen: number | null, note: (line: string) => void): Promise<ReportContent['display']> {
  for (let k = 0; k < inputs.length; k++) {
    const input = inputs[k];
    try {
      if (input.kind === 'run') {
        const event = chosen ?? input.slowestEvent;
        const file = input.configuration.file;
        if (event === null || typeof file !== 'string' || file === '<stdin>') continue;
        const why = chosen !== null ? 'chosen with --display' : 'the slowest of the run';
        return { input: k, event: await runDisplay(file, event, settingsOf(input.configuration.settings), why, gridOf(input.configuration.grid)) };
      }
      const view: CompareView = input;
      const event = chosen ?? view.document.worstEvents?.[0]?.event ?? null;
      const files = view.document.files;
      if (event === null || !files?.events || !files.candidate || files.events === '-' || files.candidate === '-') continue;
      const why = chosen !== null ? 'chosen with --display' : 'the worst of the compare';
      return { input: k, event: await compareDisplay(files.events, files.candidate, event, settingsOf(view.document.settings), why, gridOf(view.document.grid)) };
    } catch (error) {
      note(`no event display for ${input.source}: ${(error as Error).message}`);
    }
  }
  return null;
}
