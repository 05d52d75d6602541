"""The siting summary's HTML style sheet and content security policy (inline, nothing
fetched)."""

CSS = """
:root { --ink:#1d232b; --muted:#5b6470; --rule:#d5d9de; --accent:#1f5f99; --warn:#8a4b08;
        --warnbg:#fff4e0; --notebg:#eef4fa; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", "Segoe UI", Arial, Helvetica, sans-serif; color: var(--ink);
       margin: 0 auto; max-width: 62rem; padding: 1.5rem 1.5rem 3rem; line-height: 1.45;
       font-size: 15px; }
header { border-bottom: 3px solid var(--accent); padding-bottom: .8rem; margin-bottom: 1rem; }
h1 { font-size: 1.6rem; margin: 0 0 .3rem; }
h2 { font-size: 1.2rem; margin: 2rem 0 .6rem; border-bottom: 1px solid var(--rule);
     padding-bottom: .2rem; color: var(--accent); }
.meta { color: var(--muted); margin: 0; }
nav ul { columns: 2; margin: .4rem 0 0; padding-left: 0; list-style: none; }
nav a, a { color: var(--accent); }
table { border-collapse: collapse; width: 100%; margin: .5rem 0 1rem; font-size: .82rem; }
th, td { border-bottom: 1px solid var(--rule); padding: .25rem .45rem; vertical-align: top;
         text-align: left; }
th { background: #f3f5f7; font-weight: 600; }
td.r, th.r { text-align: right; font-variant-numeric: tabular-nums; }
td.r { white-space: nowrap; }
.wide { overflow-x: auto; }
table.kv td:first-child { width: 21rem; color: var(--muted); }
td { overflow-wrap: break-word; }
td.n { white-space: nowrap; overflow-wrap: normal; }
caption { caption-side: bottom; text-align: left; color: var(--muted); font-size: .8rem;
          padding-top: .3rem; }
.note { background: var(--notebg); padding: .5rem .8rem; border-radius: 4px; }
.caution { background: var(--warnbg); color: var(--warn); padding: .5rem .8rem;
           border-left: 4px solid var(--warn); border-radius: 2px; }
figure { margin: 1rem 0 1.5rem; break-inside: avoid; }
figure svg { max-width: 100%; height: auto; display: block; margin: 0 auto; }
figcaption { color: var(--muted); font-size: .85rem; }
footer { margin-top: 2rem; color: var(--muted); font-size: .8rem; border-top: 1px solid
         var(--rule); padding-top: .5rem; }
h3 { font-size: 1rem; margin: 1.2rem 0 .3rem; }
h4 { font-size: .9rem; margin: 1rem 0 .2rem; color: var(--muted); }
.appendix-start { margin-top: 3rem; border-top: 3px solid var(--accent); padding-top: .5rem; }
@media print { body { max-width: none; font-size: 11px; } nav { display: none; }
               h2 { break-after: avoid; } tr { break-inside: avoid; } }
"""

#: Nothing may load from anywhere: the page's own policy forbids it, so even a mistake in the
#: markup cannot reach the network.
CSP = ("default-src 'none'; style-src 'unsafe-inline'; img-src data:; "
       "base-uri 'none'; form-action 'none'")
