#include "stepgate/report/html_style.hpp"

namespace stepgate {

std::string_view html_report_css() {
  return R"css(
:root { --ink:#1f2430; --muted:#6b7080; --line:#d9dce3; --bg:#fbfbfc; --panel:#ffffff;
        --pass:#2f8f6b; --warn:#c98a12; --fail:#c23b33; --now:#3a6fb0; --base:#7a4fa0; }
* { box-sizing:border-box; }
body { margin:0; background:var(--bg); color:var(--ink);
       font:14px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", sans-serif; }
main { max-width:1040px; margin:0 auto; padding:24px 28px 60px; }
h1 { font-size:24px; margin:0 0 6px; display:flex; align-items:center; gap:12px; flex-wrap:wrap; }
h2 { font-size:18px; margin:0 0 10px; display:flex; align-items:center; gap:10px; flex-wrap:wrap; overflow-wrap:anywhere; }
h3 { font-size:14px; margin:18px 0 6px; color:var(--muted); text-transform:uppercase; letter-spacing:.04em; }
code, .mono { font-family:"DejaVu Sans Mono", Menlo, Consolas, monospace; font-size:12.5px; }
.meta { color:var(--muted); margin:0 0 14px; }
.meta span + span::before { content:" · "; }
.badge { display:inline-block; padding:2px 10px; border-radius:12px; font-size:13px; font-weight:600;
         color:#fff; background:var(--muted); letter-spacing:.02em; }
.badge.pass { background:var(--pass); } .badge.warn { background:var(--warn); } .badge.fail { background:var(--fail); }
.badge.none { background:#8a8f9c; }
.scope { border-left:4px solid var(--warn); background:#fff8e8; padding:8px 12px; margin:12px 0 20px; }
.card { background:var(--panel); border:1px solid var(--line); border-radius:8px; padding:16px 18px; margin:18px 0; }
table { border-collapse:collapse; width:100%; }
th, td { padding:5px 8px; border-bottom:1px solid var(--line); text-align:right; white-space:nowrap; }
th { font-size:12px; color:var(--muted); font-weight:600; }
th:first-child, td:first-child { text-align:left; white-space:normal; overflow-wrap:break-word; }
td.sev { text-align:center; }
tbody tr:hover { background:#f3f5f9; }
a { color:var(--now); text-decoration:none; } a:hover { text-decoration:underline; }
.was { color:var(--muted); font-size:12px; margin-left:4px; }
ul.findings { list-style:none; padding:0; margin:6px 0; }
ul.findings li { padding:5px 0; border-bottom:1px solid var(--line); display:grid; gap:10px; align-items:baseline;
                 grid-template-columns:48px 130px 1fr; }
ul.findings.with-case li { grid-template-columns:48px minmax(180px, 30%) 130px 1fr; }
ul.findings li .badge { text-align:center; font-size:11.5px; padding:2px 0; }
ul.findings .rule { color:var(--muted); font-size:12.5px; overflow-wrap:anywhere; }
ul.findings li > span:last-child { min-width:0; overflow-wrap:anywhere; }  /* long messages wrap in their column */
ul.findings .case { font-weight:600; overflow-wrap:anywhere; }
details summary { cursor:pointer; color:var(--muted); padding:6px 0; }
dl.facts { display:grid; grid-template-columns:max-content 1fr max-content 1fr; gap:2px 14px; margin:0; }
dl.facts dt { color:var(--muted); } dl.facts dd { margin:0; overflow-wrap:anywhere; }
.error { color:var(--fail); font-weight:600; }
pre.failures { font-family:"DejaVu Sans Mono", Menlo, Consolas, monospace; font-size:12px; white-space:pre-wrap;
  overflow-wrap:anywhere; background:var(--bg); border:1px solid var(--line); padding:8px; margin:4px 0 10px; }
.note { color:var(--muted); font-size:12.5px; margin:4px 0; }
figure { margin:4px 0 10px; }
.scroll { overflow-x:auto; }
svg.plot { display:block; max-width:100%; height:auto; font-family:inherit; }
.outmap svg.plot { max-width:none; }
.legend { display:flex; flex-wrap:wrap; gap:4px 16px; font-size:12.5px; color:var(--ink); margin-top:4px; }
.legend span { display:inline-flex; align-items:center; gap:5px; }
.key { display:inline-block; width:14px; height:10px; border-radius:2px; }
.key-now { background:var(--now); opacity:.8; } .key-base { border:1.5px dashed var(--base); height:7px; }
.key-pin { background:#1f2430; width:3px; } .key-best { background:#fff; border:1px solid var(--now); width:4px; }
.key-pred { border-left:2px dashed #d07a1c; width:2px; } .key-blow { background:var(--fail); width:3px; }
.key-none { background:#fff; border:1px solid var(--line); } .key-safe { border:2px solid var(--ink); }
.key-pinmark { width:0; height:0; border-radius:0; border-left:5px solid transparent; border-right:5px solid transparent;
               border-top:8px solid var(--ink); }
.axis { stroke:#8d92a0; stroke-width:1; } .grid { stroke:#eceef2; stroke-width:1; }
.frame { fill:none; stroke:#c9ccd4; }
.tick { fill:var(--muted); font-size:11px; } .axlabel { fill:var(--muted); font-size:11.5px; }
.rowlabel { fill:var(--ink); font-size:12px; } .muted { fill:var(--muted); font-size:11.5px; font-style:italic; }
.warnlabel { fill:var(--fail); font-size:12px; font-weight:600; }
.band-now { fill:var(--now); fill-opacity:.8; rx:3; }
.band-base { fill:var(--base); fill-opacity:.08; stroke:var(--base); stroke-width:1.5; stroke-dasharray:5 3; }
.guide { stroke:var(--base); stroke-width:1; stroke-dasharray:2 3; }
.best { stroke:#fff; stroke-width:2.5; }
.m-pin { stroke:var(--ink); stroke-width:2; fill:var(--ink); } .m-pin-head { fill:var(--ink); }
.m-pred { stroke:#d07a1c; stroke-width:2; stroke-dasharray:6 3; fill:#b8660f; }
.m-blow { stroke:var(--fail); stroke-width:2; fill:var(--fail); }
.mlabel { font-size:11.5px; stroke:none; font-weight:600; }
.lines polyline { fill:none; stroke-width:1.6; stroke-linejoin:round; }
.endx { stroke-width:2.2; }
.xmark { color:var(--fail); font-weight:700; }
.legline { stroke-width:3; } .legtext { font-size:11.5px; fill:var(--ink); } .legtitle { font-size:11.5px; fill:var(--muted); }
.cell-none { fill:#fff; stroke:#e3e5ea; }
.cellletter { fill:#fff; font-weight:700; pointer-events:none; } .cellletter .dark { fill:#3d3520; }
.safe-outline { fill:none; stroke:var(--ink); stroke-width:2; rx:2; }
.safe-label { fill:var(--ink); }
)css";
}

}  // namespace stepgate
