using CellCompiler.Rendering;

namespace CellCompiler.Reporting;

/// <summary>
/// The report's embedded stylesheet and script. Colours are the palette's CSS variables
/// (<see cref="Palette"/>) with a light and a dark set: the dark set applies when the reader's system
/// prefers dark, unless the page's toggle chose otherwise (html[data-theme]). Charts take their colours
/// from the same variables (see <see cref="ChartSvg"/>), and so do the cell pictures, which the toggle
/// switches with the page. The script sorts the candidate table by a clicked header, filters it, and
/// switches the theme; it loads nothing.
/// </summary>
public static class ReportStyle
{
    /// <summary>The page's own names for the palette's colours (<see cref="Palette"/>), the same for both themes.</summary>
    private const string Names = """
        --bg: var(--cellc-page); --surface: var(--cellc-surface); --sunk: var(--cellc-sunk); --fg: var(--cellc-text);
        --muted: var(--cellc-muted); --rule: var(--cellc-rule); --accent: var(--cellc-accent); --focus: var(--cellc-accent);
        --ok: var(--cellc-ok); --over: var(--cellc-over-budget); --broken: var(--cellc-broken); --invalid: var(--cellc-invalid);
        --front: var(--cellc-front);
        --ink-text: var(--cellc-text); --ink-axis: var(--cellc-axis); --ink-grid: var(--cellc-grid);
        --ink-ok: var(--cellc-ok); --ink-over: var(--cellc-over-budget); --ink-broken: var(--cellc-broken);
        --ink-front: var(--cellc-front); --ink-budget: var(--cellc-text);
        --paper: var(--cellc-surface); --paper-fg: var(--cellc-text);
        """;

    public static readonly string Css = $$"""
        :root { color-scheme: light; {{Palette.Light.CssVariables()}} {{Names}} }
        html[data-theme="dark"] { color-scheme: dark; {{Palette.Dark.CssVariables()}} }
        @media (prefers-color-scheme: dark) {
          html:not([data-theme="light"]) { color-scheme: dark; {{Palette.Dark.CssVariables()}} }
        }
        html[data-theme="light"] .cellc-render { {{Palette.Light.CssVariables()}} }
        html[data-theme="dark"] .cellc-render { {{Palette.Dark.CssVariables()}} }
        * { box-sizing: border-box; }
        html { background: var(--bg); color: var(--fg); }
        body { margin: 0; font: 15px/1.5 system-ui, "Segoe UI", "Liberation Sans", "DejaVu Sans", sans-serif; }
        code, .mono { font-family: ui-monospace, "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 0.92em; }
        .masthead { display: flex; align-items: flex-start; justify-content: space-between; gap: 1rem;
          padding: 1.6rem clamp(1rem, 4vw, 3rem) 1.2rem; border-bottom: 1px solid var(--rule); background: var(--surface); }
        .masthead h1 { margin: 0; font-size: 1.55rem; font-weight: 650; letter-spacing: -0.01em; }
        .masthead .lede { margin: 0.25rem 0 0; color: var(--muted); }
        .masthead .kicker { margin: 0 0 0.2rem; color: var(--accent); font-size: 0.78rem; font-weight: 600; letter-spacing: 0.08em; text-transform: uppercase; }
        #theme-toggle { flex: none; font: inherit; font-size: 0.88rem; color: var(--fg); background: var(--sunk);
          border: 1px solid var(--rule); border-radius: 999px; padding: 0.35rem 0.9rem; cursor: pointer; }
        #theme-toggle:hover { border-color: var(--accent); }
        :focus-visible { outline: 2px solid var(--focus); outline-offset: 2px; }
        main { padding: 1.4rem clamp(1rem, 4vw, 3rem) 3rem; max-width: 1400px; margin: 0 auto; }
        section { margin: 0 0 2.2rem; }
        h2 { font-size: 1.12rem; font-weight: 650; margin: 0 0 0.8rem; padding-bottom: 0.35rem; border-bottom: 2px solid var(--rule); }
        h3 { font-size: 0.95rem; font-weight: 600; margin: 1.2rem 0 0.5rem; }
        p { margin: 0.4rem 0; }
        .muted { color: var(--muted); }
        .tiles { display: grid; grid-template-columns: repeat(auto-fit, minmax(150px, 1fr)); gap: 0.75rem; }
        .tile { background: var(--surface); border: 1px solid var(--rule); border-left: 5px solid var(--tone); border-radius: 6px;
          padding: 0.7rem 0.9rem; display: grid; grid-template-columns: 1fr auto; align-items: baseline; }
        .tile .tile-n { font-size: 1.9rem; font-weight: 650; font-variant-numeric: tabular-nums; line-height: 1.1; }
        .tile .tile-share { color: var(--muted); font-variant-numeric: tabular-nums; }
        .tile .tile-label { grid-column: 1 / -1; color: var(--muted); font-size: 0.9rem; }
        .s-ok { --tone: var(--ok); } .s-over_budget { --tone: var(--over); } .s-broken { --tone: var(--broken); } .s-invalid { --tone: var(--invalid); }
        .meter { display: flex; height: 10px; margin: 0.9rem 0 0.4rem; border-radius: 5px; overflow: hidden; background: var(--sunk); }
        .meter span { display: block; background: var(--tone); }
        .facts { display: flex; flex-wrap: wrap; gap: 0.3rem 1.6rem; color: var(--muted); font-size: 0.9rem; margin: 0.5rem 0 0; padding: 0; list-style: none; }
        .facts b { color: var(--fg); font-weight: 600; font-variant-numeric: tabular-nums; }
        .reasons { list-style: none; padding: 0; margin: 0; max-width: 56rem; }
        .reasons li { display: grid; grid-template-columns: minmax(12rem, 22rem) 1fr 4.5rem; gap: 0.8rem; align-items: center; padding: 0.2rem 0; }
        .reasons .kind { overflow-wrap: anywhere; }
        .reasons .track { height: 8px; background: var(--sunk); border-radius: 4px; overflow: hidden; }
        .reasons .track span { display: block; height: 100%; background: var(--tone, var(--muted)); }
        .reasons .n { text-align: right; font-variant-numeric: tabular-nums; }
        .notes { margin: 1rem 0 0; padding: 0.7rem 0.9rem; border: 1px dashed var(--rule); border-radius: 6px; background: var(--sunk); font-size: 0.9rem; }
        .notes ul { margin: 0.3rem 0 0; padding-left: 1.2rem; }
        .chart-grid { display: grid; grid-template-columns: repeat(auto-fit, minmax(min(100%, 440px), 1fr)); gap: 1rem; }
        .chart-card.small { max-width: 500px; }
        .chart-card { margin: 0; background: var(--surface); border: 1px solid var(--rule); border-radius: 8px; padding: 0.8rem 0.9rem 0.5rem; }
        .chart-card figcaption { display: flex; flex-direction: column; margin-bottom: 0.3rem; }
        .chart-card figcaption strong { font-weight: 600; }
        .chart-card figcaption span { color: var(--muted); font-size: 0.86rem; }
        svg.chart { display: block; width: 100%; height: auto; color: var(--ink-text); }
        svg.chart text { font-family: "Liberation Sans", Arial, Helvetica, sans-serif; }
        .front-grid { display: grid; grid-template-columns: repeat(auto-fill, minmax(min(100%, 300px), 1fr)); gap: 1rem; }
        .front-card { background: var(--surface); border: 1px solid var(--rule); border-top: 4px solid var(--front); border-radius: 8px; padding: 0.7rem 0.9rem; }
        .front-card h4 { margin: 0; font-size: 0.98rem; overflow-wrap: anywhere; }
        .front-card .on-fronts { font-size: 0.86rem; margin: 0 0 0.5rem; }
        .budgets { color: var(--muted); font-size: 0.9rem; margin: 0.5rem 0 0; }
        .budgets code { color: var(--fg); }
        a { color: var(--accent); }
        .front-card .figs { color: var(--muted); font-size: 0.86rem; margin: 0.15rem 0 0.5rem; font-variant-numeric: tabular-nums; }
        .front-card.drawn { grid-column: 1 / -1; }
        .cell-picture { margin: 0; border-radius: 6px; overflow: auto; color: var(--fg); }
        .cell-picture.paper { background: var(--paper); color: var(--paper-fg); padding: 0.5rem; }
        .cell-picture svg { display: block; max-width: 100%; height: auto; border-radius: 6px; }
        .cell-picture.missing { color: var(--muted); font-size: 0.88rem; background: transparent; border: 1px dashed var(--rule); }
        .front-list { border-collapse: collapse; font-size: 0.9rem; font-variant-numeric: tabular-nums; }
        .front-list th, .front-list td { text-align: left; padding: 0.25rem 1.2rem 0.25rem 0; border-bottom: 1px solid var(--rule); }
        .front-list td.num, .front-list th.num { text-align: right; }
        .table-tools { display: flex; flex-wrap: wrap; align-items: center; gap: 0.6rem 1rem; margin-bottom: 0.6rem; }
        #filter { font: inherit; color: var(--fg); background: var(--surface); border: 1px solid var(--rule); border-radius: 6px;
          padding: 0.35rem 0.6rem; min-width: min(100%, 22rem); }
        #shown { color: var(--muted); font-size: 0.9rem; }
        .table-wrap { max-height: 75vh; overflow: auto; border: 1px solid var(--rule); border-radius: 8px; background: var(--surface); }
        table.sortable { border-collapse: separate; border-spacing: 0; width: 100%; font-size: 0.88rem; }
        table.sortable th { position: sticky; top: 0; z-index: 1; background: var(--sunk); text-align: left; border-bottom: 1px solid var(--rule); padding: 0; white-space: nowrap; }
        table.sortable th button { all: unset; box-sizing: border-box; display: block; width: 100%; padding: 0.45rem 0.7rem; cursor: pointer; font-weight: 600; }
        table.sortable th button::after { content: "\2195"; margin-left: 0.35rem; color: var(--muted); font-weight: 400; }
        table.sortable th[aria-sort="ascending"] button::after { content: "\2191"; color: var(--accent); }
        table.sortable th[aria-sort="descending"] button::after { content: "\2193"; color: var(--accent); }
        table.sortable th.num button { text-align: right; }
        table.sortable td { padding: 0.35rem 0.7rem; border-bottom: 1px solid var(--rule); vertical-align: top; }
        table.sortable td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
        table.sortable td.reason { min-width: 16rem; color: var(--muted); overflow-wrap: anywhere; }
        table.sortable td.id { white-space: nowrap; }
        table.sortable tbody tr:hover td { background: var(--sunk); }
        .badge { display: inline-block; padding: 0 0.5rem; border-radius: 999px; font-size: 0.8rem; font-weight: 600; white-space: nowrap;
          color: var(--tone); border: 1px solid var(--tone); }
        .pin { color: var(--front); margin-left: 0.3rem; }
        .empty { color: var(--muted); }
        footer { padding: 1rem clamp(1rem, 4vw, 3rem) 2rem; color: var(--muted); font-size: 0.85rem; border-top: 1px solid var(--rule); }
        @media print { #theme-toggle, .table-tools { display: none; } .table-wrap { max-height: none; overflow: visible; } }
        """;

    /// <summary>Runs in the head, before the first paint: applies a theme chosen earlier with the toggle.</summary>
    public const string EarlyScript = """
        try { var t = localStorage.getItem("cellc-report-theme"); if (t === "light" || t === "dark") document.documentElement.setAttribute("data-theme", t); } catch (e) {}
        """;

    public const string Script = """
        (function () {
          "use strict";
          var root = document.documentElement;
          var toggle = document.getElementById("theme-toggle");
          function current() {
            var chosen = root.getAttribute("data-theme");
            if (chosen === "light" || chosen === "dark") return chosen;
            return window.matchMedia && window.matchMedia("(prefers-color-scheme: dark)").matches ? "dark" : "light";
          }
          function label() {
            var next = current() === "dark" ? "light" : "dark";
            toggle.textContent = "Switch to " + next;
            toggle.setAttribute("aria-label", "Switch the page to the " + next + " theme");
          }
          if (toggle) {
            toggle.addEventListener("click", function () {
              var next = current() === "dark" ? "light" : "dark";
              root.setAttribute("data-theme", next);
              try { localStorage.setItem("cellc-report-theme", next); } catch (e) {}
              label();
            });
            if (window.matchMedia) {
              var query = window.matchMedia("(prefers-color-scheme: dark)");
              if (query.addEventListener) query.addEventListener("change", label);
            }
            label();
          }

          var table = document.getElementById("candidates");
          if (!table) return;
          var body = table.tBodies[0];
          var headers = table.tHead.rows[0].cells;
          var rows = Array.prototype.slice.call(body.rows);
          var search = rows.map(function (row) { return row.textContent.toLowerCase(); });
          var shown = document.getElementById("shown");
          function count(visible) {
            if (shown) shown.textContent = visible.toLocaleString("en-US") + " of " + rows.length.toLocaleString("en-US") + " rows shown";
          }

          Array.prototype.forEach.call(headers, function (th, column) {
            var button = th.querySelector("button");
            if (!button) return;
            button.addEventListener("click", function () {
              var direction = th.getAttribute("aria-sort") === "ascending" ? -1 : 1;
              Array.prototype.forEach.call(headers, function (other) { other.removeAttribute("aria-sort"); });
              th.setAttribute("aria-sort", direction === 1 ? "ascending" : "descending");
              var numeric = th.getAttribute("data-type") === "num";
              var keyed = Array.prototype.map.call(body.rows, function (row, index) {
                var cell = row.cells[column];
                var raw = cell.hasAttribute("data-v") ? cell.getAttribute("data-v") : cell.textContent.trim();
                var key = numeric ? (raw === "" ? null : parseFloat(raw)) : raw.toLowerCase();
                return { row: row, key: key, index: index };
              });
              keyed.sort(function (a, b) {
                if (a.key === null || b.key === null) {
                  if (a.key === b.key) return a.index - b.index;
                  return a.key === null ? 1 : -1;
                }
                var order = numeric ? a.key - b.key : (a.key < b.key ? -1 : a.key > b.key ? 1 : 0);
                return order !== 0 ? order * direction : a.index - b.index;
              });
              var fragment = document.createDocumentFragment();
              keyed.forEach(function (k) { fragment.appendChild(k.row); });
              body.appendChild(fragment);
            });
          });

          var filter = document.getElementById("filter");
          if (filter) {
            filter.addEventListener("input", function () {
              var words = filter.value.toLowerCase().split(/\s+/).filter(function (w) { return w.length > 0; });
              var visible = 0;
              rows.forEach(function (row, i) {
                var match = words.every(function (w) { return search[i].indexOf(w) >= 0; });
                row.hidden = !match;
                if (match) visible++;
              });
              count(visible);
            });
          }
          count(rows.length);
        })();
        """;
}
