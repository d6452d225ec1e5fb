package report

// reportHTML is the page of one record. Layout and colours are our own:
// a summary sheet (verdict band, card sheet, counts, failed checks with
// their diagnosis, integrity, caution), a contents list, the cases, then
// the numbered sources and the settings.
const reportHTML = `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<title>matgate record {{.R.Card.ID}} r{{.R.Card.Revision}}: {{.R.Verdict}}</title>
<style>
:root{--ink:#1d2530;--muted:#5b6470;--rule:#d5d9de;--pass:#1f3a5f;--fail:#9a3412;--warm:#fbf4e8;--note:#6a3d7a}
*{box-sizing:border-box}
body{font:14px/1.45 system-ui,"Segoe UI",Helvetica,Arial,sans-serif;color:var(--ink);margin:0 auto;max-width:76rem;padding:1.2rem 1.6rem}
h1{font-size:1.35rem;margin:.2rem 0}h2{font-size:1.1rem;margin:1.4rem 0 .4rem;padding-bottom:.15rem;border-bottom:2px solid var(--rule)}
h3{font-size:.95rem;margin:.8rem 0 .3rem}
.muted{color:var(--muted)}.small{font-size:.85em}.mono{font-family:ui-monospace,Consolas,monospace;font-size:.85em;word-break:break-all}.nw{white-space:nowrap;word-break:normal}
.band{display:flex;gap:1.2rem;align-items:stretch;border:1px solid var(--rule);border-left-width:.6rem;padding:.7rem 1rem;margin:.6rem 0}
.band.pass{border-left-color:var(--pass)}.band.fail{border-left-color:var(--fail);background:#fdf3ee}
.word{font-size:1.7rem;font-weight:700;letter-spacing:.06em;min-width:8.5rem}
.pass .word{color:var(--pass)}.fail .word{color:var(--fail)}
.counts{display:flex;gap:1.4rem;flex-wrap:wrap;align-items:center}
.counts div{text-align:center}.counts b{display:block;font-size:1.3rem}
.sheet{display:grid;grid-template-columns:1.15fr 1fr;gap:1.2rem}
table{border-collapse:collapse;width:100%}
th,td{padding:.18rem .45rem;vertical-align:top;text-align:left;border-bottom:1px solid var(--rule)}
th{font-weight:600;font-size:.85em;color:var(--muted)}
td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
.params td:first-child{width:55%}
.failed{border:1px solid var(--fail);padding:.5rem .8rem;margin:.5rem 0;background:#fffaf7}
.failed h3{margin:0 0 .2rem;color:var(--fail)}
.diag{border-left:3px solid var(--note);padding:.2rem .7rem;margin:.35rem 0;background:#f7f2f9}
.caution{border:1px dashed #b36b00;background:var(--warm);padding:.5rem .8rem;margin:.8rem 0}
.toc{columns:2;padding-left:1.2rem;margin:.3rem 0}.toc li{break-inside:avoid}
.tag{display:inline-block;min-width:4.2rem;padding:0 .3rem;font-size:.8em;border:1px solid currentColor;border-radius:2px;text-align:center}
.tag.pass{color:var(--pass)}.tag.fail{color:var(--fail)}.tag.skip{color:var(--muted)}
.case{break-inside:auto}
.casehead{display:flex;gap:1rem;align-items:flex-start;margin:.3rem 0}
.figs{display:flex;flex-wrap:wrap;gap:.5rem;flex:0 0 auto;max-width:56rem}
.figs svg{width:27rem;max-width:100%;height:auto;border:1px solid var(--rule)}
.caseinfo{flex:1 1 18rem;font-size:.92em}.caseinfo>div{margin-bottom:.3rem}
.checks td{font-size:.9em;border-bottom:none}.checks tr.why td{font-size:.78em;color:var(--muted);padding-top:0}
.checks td.name{width:47%}.checks tbody{border-bottom:1px solid var(--rule)}
.checks tbody.no td{background:#fdebe3}
.mark{font-weight:700;text-align:center;width:1.4rem}.ok{color:var(--pass)}.no .mark{color:var(--fail)}
.refs li{margin:.25rem 0}.mem{color:#8a4b00}
.kv th{width:32%}.print{display:none}
@media print{
  @page{size:A4;margin:10mm 9mm}
  body{font-size:8.2pt;line-height:1.35;max-width:none;padding:0}
  h2{font-size:10.5pt;margin:.7rem 0 .3rem;break-after:avoid}
  .band{padding:.35rem .6rem}.word{font-size:15pt}
  .casehead{gap:.5rem}.figs{gap:.2rem;max-width:7.2in}.figs svg{width:3.1in;border:none}
  .caseinfo{font-size:7.6pt}
  .checks td{font-size:7.4pt;padding:.04rem .25rem}.checks tr.why td{font-size:6.5pt;line-height:1.25}
  .checks tbody{break-inside:avoid}
  .failed,.diag,.caution{break-inside:avoid}
  a{color:inherit;text-decoration:none}
  .screen{display:none}.print{display:block}
  .tb{display:none}
}
</style></head><body>
<header>
<div class="muted small">matgate verification record · {{.R.Format}}</div>
<h1>{{.R.Card.ID}} revision {{.R.Card.Revision}}</h1>
<div>{{.Card.Title}}</div>
</header>

<section class="band {{.R.Verdict}}" aria-label="verdict">
<div class="word">{{if eq .R.Verdict "pass"}}PASSED{{else}}FAILED{{end}}</div>
<div class="counts">
<div><b>{{.Checks}}</b>checks</div>
<div><b>{{.Passed}}</b>passed</div>
<div><b>{{.Failed}}</b>failed</div>
<div><b>{{.Omitted}}</b>not applicable</div>
<div><b>{{len .Cases}}</b>cases{{if .SkippedCases}} ({{.SkippedCases}} not run){{end}}</div>
<div><b>{{len .R.Findings}}</b>findings</div>
</div>
</section>

<div class="sheet">
<section>
<h2>Card</h2>
<table class="kv">
<tr><th>id, revision</th><td>{{.R.Card.ID}} r{{.R.Card.Revision}}</td></tr>
<tr><th>title</th><td>{{.Card.Title}}</td></tr>
<tr><th>source</th><td>{{.Card.Source}}</td></tr>
{{with .Card.Temperature}}<tr><th>temperature</th><td>{{.}}</td></tr>{{end}}
<tr><th>stress unit</th><td>{{.Unit.Unit}}{{if not .Unit.Known}} <span class="muted small">(the unit the card was written in is not in the record; its canonical form is in Pa)</span>{{else if .Unit.Asked}} <span class="muted small">(as asked for; the record holds SI and not the unit the card was written in)</span>{{else}} <span class="muted small">(as written; the record holds SI)</span>{{end}}</td></tr>
</table>
<h3>Parameters</h3>
<table class="params">
{{range .Card.Params}}<tr><td>{{.Name}}</td><td>{{.Symbol}}</td><td class="n">{{.Value}}</td><td>{{.Unit}}</td></tr>
{{end}}</table>
</section>
<section>
<h2>Verification</h2>
<table class="params">
{{range .Card.Sizing}}<tr><td>{{.Name}}</td><td class="n">{{.Value}}</td><td>{{.Unit}}</td></tr>
{{end}}{{range .Card.References}}<tr><td>reference curve</td><td colspan="2">{{.}}</td></tr>
{{end}}</table>
<h3>Integrity</h3>
<table class="kv">
<tr><th>record digest</th><td><span class="mono">{{.R.Digest}}</span><br>{{if .DigestOK}}matches the record's content{{else}}<b class="no">does not match the record's content: the record was altered</b>{{end}}</td></tr>
<tr><th>signature</th><td>{{with .R.Signature}}signed with {{.Algorithm}} key <span class="mono">{{.KeyID}}</span>; check it with the signer's public key (<span class="mono nw">matgate record verify --public-key</span>){{else}}not signed: nothing shows who made the record{{end}}</td></tr>
<tr><th>card digest</th><td><span class="mono">{{.R.Card.Digest}}</span></td></tr>
<tr><th>tool, created</th><td>matgate {{.R.Tool.Version}} ({{.R.Tool.Commit}}), {{.R.Created}}</td></tr>
</table>
</section>
</div>

{{if .FailedChecks}}<section>
<h2>Failed checks ({{len .FailedChecks}})</h2>
{{range .FailedChecks}}<div class="failed">
<h3><a href="#{{.Anchor}}">{{.Case}}</a>: {{.Row.Name}}</h3>
<div>{{.Row.Quantity}}</div>
<div>value <b>{{.Row.Value}}</b>, reference {{.Row.Reference}}{{with .Row.UnitName}} {{.}}{{end}}, tolerance {{.Row.Tolerance}}</div>
<div class="small muted">reference from: {{.Row.Source}}</div>
{{range .Findings}}<div class="diag"><b>Diagnosis{{with .Misreading}}: {{.}}{{end}}.</b> {{.Text}}</div>
{{else}}<div class="diag">No diagnosis: matgate diagnoses misreadings of the card on reference-curve checks only; compare the value with its reference and the source above.</div>{{end}}
</div>{{end}}
</section>{{end}}

{{if .NearMisses}}<section>
<h2>Findings on passing checks ({{len .NearMisses}})</h2>
<p class="small muted">A usual misreading of the card matches a reference curve far better than the card as written, although the card passes.</p>
{{range .NearMisses}}<div class="diag"><a href="#{{.Anchor}}">{{.Case}}</a>{{with .Misreading}} ({{.}}){{end}}: {{.Text}}</div>
{{end}}</section>{{end}}

<p class="caution"><b>Caution.</b> {{.R.Caution}}</p>

<nav><h2>Cases</h2>
<ol class="toc">
{{range .Cases}}<li><a href="#{{.Anchor}}">{{.Name}}</a>{{if ne .Kind .Name}} <span class="muted small">{{.Kind}}</span>{{end}} {{if .Skipped}}<span class="tag skip">not run</span>{{else if .Failed}}<span class="tag fail">{{.Failed}} failed</span>{{else}}<span class="tag pass">{{.Passed}} passed</span>{{end}}</li>
{{end}}</ol>
<p class="small muted">Values are in {{.Unit.Unit}} ({{.Unit.EnergyUnit}} for energy per volume) with 4 significant digits; strains are plain numbers where no % is shown; the record holds every value in SI to full precision. Sources are cited by number: see <a href="#sources">Sources</a>.</p>
<p class="small muted print">This printed copy leaves out the basis of each tolerance; the report on screen and the record hold it.</p>
</nav>

{{with .Temperatures}}<section><h2>Response at each temperature</h2>
<div class="figs">{{.}}</div>
<p class="small muted">The card is temperature-dependent: its standard cases run at each tabulated temperature (named at-&lt;T&gt;K/...), the card interpolated between neighbours is checked against them (between-...), and the anisothermal cases follow.</p></section>{{end}}

{{range .Cases}}<section class="case" id="{{.Anchor}}">
<h2>{{.Name}}{{if ne .Kind .Name}} <span class="muted small">{{.Kind}}</span>{{end}}{{with .Temperature}} <span class="muted small">{{.}}</span>{{end}}</h2>
{{if .Skipped}}<p><em>Not run: {{.Skipped}}</em></p>{{else}}
<div class="casehead">
{{if .Plots}}<div class="figs">{{range .Plots}}{{.}}{{end}}</div>{{end}}
<div class="caseinfo">
<div>{{.Loading}}</div>
{{range .Findings}}<div class="diag">Finding{{with .Misreading}} ({{.}}){{end}}{{if .Passed}} on a passing check{{end}}: {{.Text}}</div>{{end}}
{{if .Plots}}<div class="small muted">The record keeps the response thinned: no increment left out lies further from the drawn line than 0.1 % of an axis range (doubled when a case would need more than 120 points).{{if .Gaps}} This long run keeps its first and last increments; the line breaks where increments are left out.{{end}}</div>{{end}}
{{with .Measures}}<div class="small muted">Measured, not checked: {{range $i, $m := .}}{{if $i}}; {{end}}{{$m}}{{end}}.</div>{{end}}
{{range .Omitted}}<div class="small muted">Not applicable: {{.Check}}: {{.Why}}</div>{{end}}
</div></div>
<table class="checks">
<tr><th></th><th>check</th><th class="n">value</th><th class="n">reference</th><th>unit</th><th>tolerance</th></tr>
{{range .Rows}}<tbody{{if not .Pass}} class="no"{{end}}><tr><td class="mark {{if .Pass}}ok{{end}}"{{if not .Same}} rowspan="2"{{end}}>{{if .Pass}}✓{{else}}✗{{end}}</td><td class="name">{{.Name}}{{if .Same}} <span class="small muted">· quantity and reference as in <a href="#{{.SameAnchor}}">{{.Same}}</a></span>{{end}}</td><td class="n">{{.Value}}</td><td class="n">{{.Reference}}</td><td>{{.UnitName}}</td><td>{{.Tolerance}}</td></tr>
{{if .Same}}<tr class="why tb"><td colspan="6"><b>tolerance:</b> {{.Basis}}</td></tr>{{else}}<tr class="why"><td colspan="5"><i>{{.Quantity}}</i> · <b>reference:</b> {{.Source}}<span class="tb"> · <b>tolerance:</b> {{.Basis}}</span></td></tr>{{end}}</tbody>
{{end}}</table>
{{end}}</section>
{{end}}

<section id="sources">
<h2>Sources</h2>
<ol class="refs">
{{range .Bib.Entries}}<li>{{.Citation}}.{{with .Uses}} <span class="muted">Used for: {{range $i, $u := .}}{{if $i}}; {{end}}{{$u}}{{end}}.</span>{{end}}{{if .Memory}} <span class="mem">{{range .Memory}}{{.}}; {{end}}{{.Confirm}}.</span>{{end}}</li>
{{end}}</ol>
<p class="small muted">Text marked "common practice, no source" is a fact of the trade; "derived here" is derived in matgate's code from the cited works.</p>
</section>

<section>
<h2>Settings</h2>
<table class="kv small">
<tr><th>profile, algorithm</th><td>{{.R.Settings.Profile}}, {{.R.Settings.Algorithm}}</td></tr>
<tr><th>step-size rerun</th><td>{{.R.Settings.Refinement}}</td></tr>
<tr><th>stabilized cycle</th><td>{{.Stabilized}}</td></tr>
<tr><th>increments per case (in the rerun)</th><td>{{range $i, $c := .R.Settings.Cases}}{{if $i}}; {{end}}{{$c.Case}}: {{$c.Control}} control, {{$c.Increments}} ({{$c.Rerun}}){{end}}</td></tr>
</table>
</section>
<p class="caution"><b>Caution.</b> {{.R.Caution}}</p>
</body></html>
`
