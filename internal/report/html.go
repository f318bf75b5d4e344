// Package report draws wakekit's plots (PNG via gonum/plot) and writes its self-contained HTML
// report.
package report

import (
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
	"time"
)

// Row is one line of a report's summary table.
type Row struct {
	Group       string // section heading the row belongs to (rows of a group are kept together)
	Name        string
	Value       string // formatted value, or "not computed"
	Uncertainty string // formatted one-standard-deviation uncertainty, or ""
	Unit        string
	Note        string
}

// Image is a plot embedded in the report.
type Image struct {
	Title, Caption string
	PNG            []byte
}

// Method is one method entry with its reference.
type Method struct {
	Name, Text, Reference string
}

// Report is the content of a self-contained HTML report.
type Report struct {
	Title    string
	Subtitle string
	// Generated is the time the report was written (zero: omitted, for reproducible output).
	Generated time.Time
	Summary   []Row
	Images    []Image
	// Inputs and Settings are name/value pairs.
	Inputs, Settings [][2]string
	Methods          []Method
	// Unmeasured lists what the analysis could not measure or compute, said plainly.
	Unmeasured []string
	Cautions   []string
}

// DefaultCautions are the cautions every wakekit report carries.
var DefaultCautions = []string{
	"The figures in this report are estimates for research and design studies, not certification of any device; they carry the uncertainties stated beside them and the limitations listed above.",
	"Velocimetry uses Class 3B and Class 4 lasers, and pulsed-jet rigs often use pressurised reservoirs. Laser and pressure work follows the lab's safety officer, local regulations and licensed practice.",
}

type group struct {
	Name string
	Rows []Row
}

type imageView struct {
	Title, Caption string
	Src            template.URL
}

var page = template.Must(template.New("report").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title>
<style>
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0;color:#1d232b;background:#fafafa;line-height:1.45}
main{max-width:60rem;margin:0 auto;padding:1rem}
h1{font-size:1.6rem;margin:.5rem 0}
h2{font-size:1.25rem;margin-top:2rem;border-bottom:1px solid #ccd;padding-bottom:.2rem}
h3{font-size:1.05rem;margin:1.2rem 0 .3rem}
.sub{color:#556}
.scroll{overflow-x:auto;-webkit-overflow-scrolling:touch}
table{border-collapse:collapse;width:100%;font-size:.95rem;background:#fff}
th,td{padding:.35rem .5rem;border-bottom:1px solid #e3e3ea;text-align:left;vertical-align:top}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
figure{margin:1rem 0;background:#fff;padding:.5rem;border:1px solid #e3e3ea}
figure img{max-width:100%;height:auto;display:block;margin:0 auto}
figcaption{font-size:.9rem;color:#445;margin-top:.3rem}
.caution{background:#fff6e0;border-left:4px solid #d4a017;padding:.6rem .8rem;margin:.6rem 0}
.missing{background:#f3f3f7;border-left:4px solid #8890a0;padding:.6rem .8rem;margin:.6rem 0}
@media (min-width:50rem){.plots{display:grid;grid-template-columns:1fr 1fr;gap:1rem}.plots figure{margin:0}}
</style>
</head>
<body>
<main>
<h1>{{.Title}}</h1>
{{if .Subtitle}}<p class="sub">{{.Subtitle}}</p>{{end}}
{{if .Generated}}<p class="sub">Written {{.Generated}}</p>{{end}}

<h2 id="summary">Summary</h2>
{{range .Groups}}<h3>{{.Name}}</h3>
<div class="scroll"><table>
<thead><tr><th>Quantity</th><th>Value</th><th>± 1σ</th><th>Unit</th><th>Note</th></tr></thead>
<tbody>{{range .Rows}}
<tr><td>{{.Name}}</td><td class="num">{{.Value}}</td><td class="num">{{.Uncertainty}}</td><td>{{.Unit}}</td><td>{{.Note}}</td></tr>{{end}}
</tbody></table></div>
{{end}}

{{if .Images}}<h2 id="plots">Plots</h2>
<div class="plots">{{range .Images}}
<figure><img src="{{.Src}}" alt="{{.Title}}"><figcaption><strong>{{.Title}}.</strong> {{.Caption}}</figcaption></figure>{{end}}
</div>{{end}}

{{if .Unmeasured}}<h2 id="limits">What was not measured</h2>
{{range .Unmeasured}}<p class="missing">{{.}}</p>
{{end}}{{end}}

<h2 id="inputs">Inputs and settings</h2>
<div class="scroll"><table><tbody>{{range .Inputs}}
<tr><th>{{index . 0}}</th><td>{{index . 1}}</td></tr>{{end}}{{range .Settings}}
<tr><th>{{index . 0}}</th><td>{{index . 1}}</td></tr>{{end}}
</tbody></table></div>

{{if .Methods}}<h2 id="methods">Methods</h2>
{{range .Methods}}<h3>{{.Name}}</h3><p>{{.Text}}{{if .Reference}} <em>{{.Reference}}</em>{{end}}</p>
{{end}}{{end}}

<h2 id="cautions">Cautions</h2>
{{range .Cautions}}<p class="caution">{{.}}</p>
{{end}}
</main>
</body>
</html>
`))

// Write renders the report as one self-contained HTML file: every image is embedded as a
// base64 PNG data URI and no external file, font or script is referenced.
func (r *Report) Write(w io.Writer) error {
	var groups []group
	for _, row := range r.Summary {
		if len(groups) == 0 || groups[len(groups)-1].Name != row.Group {
			groups = append(groups, group{Name: row.Group})
		}
		groups[len(groups)-1].Rows = append(groups[len(groups)-1].Rows, row)
	}
	images := make([]imageView, 0, len(r.Images))
	for _, im := range r.Images {
		if len(im.PNG) < 8 || string(im.PNG[1:4]) != "PNG" {
			return fmt.Errorf("report image %q is not a PNG", im.Title)
		}
		images = append(images, imageView{Title: im.Title, Caption: im.Caption,
			Src: template.URL("data:image/png;base64," + base64.StdEncoding.EncodeToString(im.PNG))})
	}
	cautions := r.Cautions
	if len(cautions) == 0 {
		cautions = DefaultCautions
	}
	gen := ""
	if !r.Generated.IsZero() {
		gen = r.Generated.UTC().Format("2006-01-02 15:04 UTC")
	}
	return page.Execute(w, map[string]any{
		"Title": r.Title, "Subtitle": r.Subtitle, "Generated": gen,
		"Groups": groups, "Images": images, "Inputs": r.Inputs, "Settings": r.Settings,
		"Methods": r.Methods, "Unmeasured": r.Unmeasured, "Cautions": cautions,
	})
}
