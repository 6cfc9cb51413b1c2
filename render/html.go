package render

import (
	"bytes"
	"html"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/extension"

	"ordplan/runner"
)

const css = `body{font-family:system-ui,-apple-system,"Segoe UI",sans-serif;max-width:1100px;margin:2em auto;padding:0 1em;color:#1b1b1b;line-height:1.45}
table{border-collapse:collapse;margin:0.6em 0 1.2em;font-size:0.9em}th,td{border:1px solid #ccc;padding:0.25em 0.6em;text-align:left;vertical-align:top}
th{background:#f2f2f2}tr:nth-child(even) td{background:#fafafa}code{background:#f4f4f4;padding:0 0.2em}h2{border-bottom:2px solid #ddd;padding-bottom:0.2em;margin-top:2em}
.chart{margin:1em 0}`

// HTML renders the self-contained report.html from the Markdown.
func HTML(r *runner.Result, md []byte) ([]byte, error) {
	conv := goldmark.New(goldmark.WithExtensions(extension.Table))
	var body bytes.Buffer
	if err := conv.Convert(md, &body); err != nil {
		return nil, err
	}
	title := r.Plan.Title
	if r.Plan.Report.Title != "" {
		title = r.Plan.Report.Title
	}
	var out bytes.Buffer
	out.WriteString("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>")
	out.WriteString(html.EscapeString(title))
	out.WriteString("</title>\n<style>" + css + "</style>\n</head>\n<body>\n")
	out.Write(body.Bytes())
	out.WriteString("</body>\n</html>\n")
	return out.Bytes(), nil
}
