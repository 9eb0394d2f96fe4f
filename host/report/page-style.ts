// The page's style sheet, inline in every report: plain, print-friendly (black on white, no
// backgrounds that a printer drops to nothing), charts kept whole across page breaks.

export const PAGE_STYLE = `
:root { color: #1e2329; background: #ffffff; font: 14px/1.45 Helvetica, Arial, sans-serif; }
body { margin: 0 auto; max-width: 1320px; padding: 16px 24px 40px; }
h1 { font-size: 22px; margin: 0 0 4px; }
h2 { font-size: 18px; margin: 28px 0 8px; border-bottom: 2px solid #1b5e9e; padding-bottom: 3px; }
h3 { font-size: 15px; margin: 20px 0 6px; }
.lead { color: #4b5563; margin: 0 0 8px; overflow-wrap: anywhere; }
ul.notes, ul.conditions { margin: 6px 0 12px; padding-left: 20px; }
ul.conditions li { color: #7a2e00; }
.warning { color: #7a2e00; font-weight: bold; }
figure.chart { display: inline-block; vertical-align: top; margin: 10px 18px 14px 0; max-width: 100%; break-inside: avoid; }
figure.chart svg { max-width: 100%; height: auto; }
figure.chart figcaption { font-size: 12px; color: #4b5563; max-width: 640px; margin-top: 2px; }
figure.event-display figcaption { max-width: 900px; }
.tables { overflow-x: auto; }
table { border-collapse: collapse; margin: 6px 0 12px; font-size: 13px; }
th, td { border-bottom: 1px solid #d0d5db; padding: 3px 10px 3px 0; text-align: left; vertical-align: top; overflow-wrap: anywhere; }
thead th { border-bottom: 2px solid #1e2329; }
td { font-variant-numeric: tabular-nums; }
tbody th { font-weight: normal; color: #374151; }
footer { margin-top: 32px; font-size: 12px; color: #6b7280; }
@media print { body { max-width: none; padding: 0; } h2 { break-after: avoid; } }
`;
