#include "study/report_style.hpp"

namespace tinct {

const char* const kReportStyle = R"css(
:root { --ink: #1d2329; --muted: #5b6570; --line: #d9dee3; --soft: #f4f6f8; --accent: #0072B2; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #ffffff; line-height: 1.5; font-size: 15px;
  font-family: "DejaVu Sans", "Liberation Sans", "Helvetica Neue", Arial, sans-serif; }
header.top { background: #1f3a4d; color: #ffffff; padding: 26px 0 20px; }
.wrap { max-width: 1200px; margin: 0 auto; padding: 0 32px; }
header.top .kicker { margin: 0; text-transform: uppercase; letter-spacing: 0.08em; font-size: 12px;
  color: #b9cbd8; }
header.top h1 { margin: 4px 0 6px; font-size: 28px; font-weight: 600; }
header.top .meta { margin: 0; color: #d5e0e8; font-size: 13px; }
nav.contents { border-bottom: 1px solid var(--line); background: var(--soft); font-size: 13px; }
nav.contents .wrap { padding-top: 8px; padding-bottom: 8px; }
nav.contents a { color: var(--accent); text-decoration: none; margin-right: 16px; white-space: nowrap; }
main { padding-bottom: 12px; }
section { padding: 8px 0 18px; border-bottom: 1px solid var(--line); }
h2 { font-size: 20px; font-weight: 600; margin: 20px 0 8px; }
h3 { font-size: 15px; font-weight: 600; margin: 16px 0 6px; color: #2b3640; }
p.lead { color: var(--muted); margin: 0 0 10px; max-width: 900px; }
.note { color: var(--muted); font-size: 13px; max-width: 980px; }
.warning { border-left: 4px solid #D55E00; background: #fdf1ea; padding: 10px 14px; margin: 18px 0 4px; }
.warning strong { color: #8f3d00; }
ul.findings { list-style: none; padding: 0; margin: 6px 0; }
ul.findings li { padding: 7px 0 7px 0; border-bottom: 1px dotted var(--line); max-width: 1040px; }
.tag { display: inline-block; min-width: 118px; margin-right: 8px; padding: 1px 8px; border-radius: 3px;
  font-size: 12px; font-weight: 600; text-align: center; vertical-align: 1px; }
.tag.better { background: #dcebf6; color: #004a75; }
.tag.unconfirmed { background: #fbe9d3; color: #7a4300; }
.tag.none { background: #eceff2; color: #47515b; }
figure { margin: 12px 0; }
figure svg, figure img { max-width: 100%; height: auto; }
figcaption { color: var(--muted); font-size: 13px; margin-top: 4px; max-width: 980px; }
svg text { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
.panels { display: flex; flex-wrap: wrap; gap: 8px 28px; align-items: flex-start; }
.panels figure { margin: 8px 0; }
table { border-collapse: collapse; font-size: 13px; margin: 10px 0; }
th, td { padding: 5px 10px; border-bottom: 1px solid var(--line); text-align: left; vertical-align: top; }
th { background: var(--soft); font-weight: 600; border-bottom: 1px solid #b8c0c8; }
td.label { white-space: nowrap; }
td.verdict { min-width: 150px; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr.baseline td { color: #4a4a4a; background: #fafafa; }
tr.group td { border-top: 2px solid #b8c0c8; }
.swatch { display: inline-block; width: 10px; height: 10px; border-radius: 2px; margin-right: 6px;
  vertical-align: 0; }
.swatch.hollow { background: #ffffff !important; border: 2px solid; }
pre { background: var(--soft); border: 1px solid var(--line); padding: 12px; overflow-x: auto;
  font-size: 12px; line-height: 1.45; max-height: 520px; }
.preview-head { display: grid; grid-template-columns: 1fr 1fr; font-size: 12px; font-weight: 600;
  color: var(--muted); text-align: center; }
.preview img { image-rendering: pixelated; display: block; border: 1px solid var(--line); }
footer { background: #fff8e6; border-top: 3px solid #E69F00; margin-top: 24px; padding: 4px 0 22px; }
footer h2 { font-size: 17px; }
footer p { max-width: 980px; }
@media print {
  header.top { background: none; color: var(--ink); }
  header.top .kicker, header.top .meta { color: var(--muted); }
  nav.contents { display: none; }
  section, figure { break-inside: avoid; }
}
)css";

}  // namespace tinct
