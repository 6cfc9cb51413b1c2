package render

import (
	"bufio"
	"bytes"
	"fmt"
	"html"
	"strings"
	"unicode"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension"
	extast "github.com/yuin/goldmark/extension/ast"
	"github.com/yuin/goldmark/parser"
	"github.com/yuin/goldmark/renderer"
	gmhtml "github.com/yuin/goldmark/renderer/html"
	"github.com/yuin/goldmark/util"
)

const css = `body{font-family:system-ui,-apple-system,"Segoe UI",sans-serif;max-width:1100px;margin:2em auto;padding:0 1em;color:#1b1b1b;line-height:1.45;overflow-wrap:break-word}
table{border-collapse:collapse;margin:0.6em 0 1.2em;font-size:0.9em}th,td{border:1px solid #ccc;padding:0.25em 0.6em;text-align:left;vertical-align:top}
th{background:#f2f2f2}td{white-space:nowrap}td[style*="right"],th[style*="right"]{font-variant-numeric:tabular-nums}td:not([style*="right"]):not([style*="center"]){white-space:normal;min-width:8em;max-width:38em;overflow-wrap:break-word}
.table-wrap{overflow-x:auto;max-width:100%;margin:0.6em 0 1.2em}.table-wrap table{margin:0}
.table-wrap.scrolls::before{content:"Scroll sideways for more columns \2192";display:block;position:sticky;left:0;font-size:0.8em;color:#555;margin-bottom:0.2em}
.table-wrap.scrolls:not(.at-end){-webkit-mask-image:linear-gradient(to right,#000 calc(100% - 2.5em),rgba(0,0,0,0.25));mask-image:linear-gradient(to right,#000 calc(100% - 2.5em),rgba(0,0,0,0.25))}
nav.toc ul{margin:0.2em 0}tr:nth-child(even) td{background:#fafafa}code{background:#f4f4f4;padding:0 0.2em}h2{border-bottom:2px solid #ddd;padding-bottom:0.2em;margin-top:2em}
.chart-group{display:flex;flex-wrap:wrap;gap:1em;margin:1em 0 1.5em}.chart-figure{flex:1 1 480px;margin:0;border:1px solid #e3e3e3;padding:0.5em;min-width:0}
.chart-figure.wide{flex-basis:100%}.chart{width:100%}figcaption{font-size:0.85em;color:#444;margin-top:0.3em}
.chart-tools{font-size:0.8em;color:#555;margin-top:0.3em}.chart-tools button{font-size:1em;padding:0.1em 0.6em;margin-left:0.2em;border:1px solid #bbb;background:#f7f7f7;border-radius:3px;cursor:pointer}@media print{.chart-tools,.table-wrap.scrolls::before{display:none}.table-wrap.scrolls:not(.at-end){-webkit-mask-image:none;mask-image:none}}
.why{display:inline-block;max-width:16em;white-space:normal}
@media (max-width:600px){td:not([style*="right"]):not([style*="center"]){min-width:5em}}
#js-errors{white-space:pre-wrap;color:#a00;border:2px solid #a00;padding:0.5em;margin:1em 0}#js-errors:empty{display:none}`

// errorScript runs first: any script error on the page, or message to
// console.error, is written into the #js-errors box, so a reader (or a
// test) sees that a chart failed.
const errorScript = `window.ordplanError=function(msg){var e=document.getElementById("js-errors");if(e){e.appendChild(document.createTextNode(String(msg)+"\n"));}};
window.onerror=function(msg,src,line){window.ordplanError("script error: "+msg+" (line "+line+")");};
(function(){var ce=console.error;console.error=function(){window.ordplanError("console.error: "+Array.prototype.join.call(arguments," "));return ce.apply(console,arguments);};})();`

// tableScript marks a table box whose table is wider than the box (class
// scrolls: the table scrolls sideways in it, which a phone shows by
// nothing else), with a note above the table and its right edge faded
// until the box is scrolled to its end (class at-end), on loading, on
// every change of the window's size and as the box scrolls.
const tableScript = `(function(){function end(w){w.classList.toggle("at-end",w.scrollLeft+w.clientWidth>=w.scrollWidth-1);}
function mark(){var ws=document.querySelectorAll(".table-wrap");for(var i=0;i<ws.length;i++){var w=ws[i];w.classList.toggle("scrolls",w.scrollWidth>w.clientWidth+1);end(w);}}
document.addEventListener("scroll",function(e){var w=e.target;if(w.classList&&w.classList.contains("table-wrap")){end(w);}},true);
window.addEventListener("resize",mark);mark();})();`

// noScriptCSS stands in for tableScript where scripts do not run: a
// table box shades the edge beyond which its table goes on (a shadow
// the box's background draws at each edge, covered by white that
// scrolls with the table where the table ends there), so a table wider
// than the box still shows that it scrolls sideways, without the note.
// The cells' backgrounds are made translucent so that the shadow shows
// through them (the same greys on white).
const noScriptCSS = `.table-wrap{background:linear-gradient(to right,#fff 40%,rgba(255,255,255,0)) left/3em 100% no-repeat local,linear-gradient(to left,#fff 40%,rgba(255,255,255,0)) right/3em 100% no-repeat local,radial-gradient(farthest-side at 0 50%,rgba(0,0,0,0.3),rgba(0,0,0,0)) left/1em 100% no-repeat scroll,radial-gradient(farthest-side at 100% 50%,rgba(0,0,0,0.3),rgba(0,0,0,0)) right/1em 100% no-repeat scroll}
.table-wrap th{background:rgba(0,0,0,0.05)}.table-wrap tr:nth-child(even) td{background:rgba(0,0,0,0.02)}@media print{.table-wrap{background:none}}`

// drawScript draws one chart, marks its element with data-rendered="1"
// and keeps the chart and its option for the export buttons: PNG from the
// drawn chart, SVG from a copy drawn once, off screen, by the library's SVG
// renderer. A chart whose series share names (a legend entry showing and
// hiding several at once) names each series in its axis tooltip by its
// option's ordplanTooltip (chartFrame.tooltipNames), escaped as the
// library escapes series names. A chart with a data-narrow attribute
// ("WIDTH:HEIGHT ...", from the widest) takes the height of the narrowest
// WIDTH it is narrower than, and one with a data-wide attribute (from the
// narrowest) that of the widest WIDTH it is as wide as, before it is
// drawn and whenever the window's size changes: its option's media
// queries wrap its titles there and move its plot by the same lines and
// legend rows (narrowLayout).
const drawScript = `var ordplanCharts={};
function ordplanHeight(el){var n=el.getAttribute("data-narrow"),w=el.getAttribute("data-wide");if(!n&&!w){return;}if(!el.hasAttribute("data-height")){el.setAttribute("data-height",el.style.height);}var h=el.getAttribute("data-height"),s=n?n.split(" "):[],p,i;for(i=0;i<s.length;i++){p=s[i].split(":");if(el.clientWidth<+p[0]){h=p[1]+"px";}}s=w?w.split(" "):[];for(i=0;i<s.length;i++){p=s[i].split(":");if(el.clientWidth>=+p[0]){h=p[1]+"px";}}el.style.height=h;}
function ordplanTooltip(option){var n=option.ordplanTooltip;if(!n){return;}delete option.ordplanTooltip;var e=echarts.format.encodeHTML;option.tooltip.formatter=function(ps){var s=e(String(ps[0].axisValueLabel));for(var i=0;i<ps.length;i++){var p=ps[i],v=p.value;s+="<br>"+p.marker+e(n[p.seriesIndex])+" <b>"+e(String(v==null?"-":v))+"</b>";}return s;};}
function ordplanDraw(id,option){var el=document.getElementById(id);try{ordplanHeight(el);ordplanTooltip(option);var c=echarts.init(el,null,{renderer:"canvas"});c.setOption(option);ordplanCharts[id]={chart:c,option:option};el.setAttribute("data-rendered","1");window.addEventListener("resize",function(){ordplanHeight(el);c.resize();});}catch(e){window.ordplanError(id+": "+e);}}
function ordplanSave(url,name){var a=document.createElement("a");a.href=url;a.download=name;document.body.appendChild(a);a.click();document.body.removeChild(a);}
function ordplanExport(id,kind){var k=ordplanCharts[id];if(!k){window.ordplanError(id+": not drawn, nothing to export");return;}try{if(kind==="png"){ordplanSave(k.chart.getDataURL({type:"png",pixelRatio:2,backgroundColor:"#ffffff"}),id+".png");return;}
var el=document.getElementById(id),box=document.createElement("div");box.style.cssText="position:absolute;left:-10000px;top:0;width:"+el.clientWidth+"px;height:"+el.clientHeight+"px";document.body.appendChild(box);
var s=echarts.init(box,null,{renderer:"svg"});s.setOption(k.option);var url=s.getDataURL({type:"svg",backgroundColor:"#ffffff"});s.dispose();document.body.removeChild(box);ordplanSave(url,id+".svg");}catch(e){window.ordplanError(id+": export failed: "+e);}}
document.addEventListener("click",function(ev){var b=ev.target.closest?ev.target.closest("button[data-export]"):null;if(b){ordplanExport(b.getAttribute("data-chart"),b.getAttribute("data-export"));}});`

// html renders the self-contained report.html: the report's Markdown as
// HTML, each chart group where report.md has its note, the chart library
// and the chart options inline.
func (d *doc) html(title string) ([]byte, error) {
	d.flush()
	conv := goldmark.New(goldmark.WithExtensions(extension.Table), goldmark.WithParserOptions(parser.WithAutoHeadingID()),
		goldmark.WithRendererOptions(renderer.WithNodeRenderers(util.Prioritized(newCellText(), 100))))
	var out bytes.Buffer
	ids := &headingIDs{heads: d.heads}
	convert := func(md string) error {
		var buf bytes.Buffer
		if err := conv.Convert([]byte(md), &buf, parser.WithContext(parser.NewContext(parser.WithIDs(ids)))); err != nil {
			return err
		}
		// Wide tables scroll inside their box instead of squeezing cells.
		h := strings.ReplaceAll(wrapNumberColumnProse(buf.String()), "<table>", `<div class="table-wrap"><table>`)
		out.WriteString(strings.ReplaceAll(h, "</table>", "</table></div>"))
		return nil
	}
	out.WriteString("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
	out.WriteString("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>")
	out.WriteString(html.EscapeString(title))
	out.WriteString("</title>\n<style>" + css + "</style>\n<noscript><style>" + noScriptCSS + "</style></noscript>\n")
	out.WriteString("<script>\n" + errorScript + "\n</script>\n</head>\n<body>\n<div id=\"js-errors\" role=\"alert\"></div>\n")
	for _, pt := range d.parts {
		if pt.toc || pt.charts == nil {
			md := pt.md
			if pt.toc {
				md = d.tocMarkdown()
			}
			if err := convert(md); err != nil {
				return nil, err
			}
			continue
		}
		out.WriteString("<div class=\"chart-group\">\n")
		for _, c := range pt.charts {
			class := "chart-figure"
			if len(pt.charts) == 1 {
				class += " wide"
			}
			narrow := ""
			if len(c.narrow) > 0 {
				narrow = fmt.Sprintf(" data-narrow=\"%s\"", heights(c.narrow))
			}
			if len(c.wider) > 0 {
				narrow += fmt.Sprintf(" data-wide=\"%s\"", wideHeights(c.wider))
			}
			fmt.Fprintf(&out, "<figure class=\"%s\"><div class=\"chart\" id=\"%s\" style=\"height:%dpx\"%s></div><figcaption><b>Figure %d.</b> %s</figcaption>"+
				"<div class=\"chart-tools\">Save: <button type=\"button\" data-export=\"png\" data-chart=\"%s\">PNG</button> <button type=\"button\" data-export=\"svg\" data-chart=\"%s\">SVG</button></div></figure>\n",
				class, c.id, c.height, narrow, c.number, html.EscapeString(c.caption), c.id, c.id)
		}
		out.WriteString("</div>\n")
	}
	if cs := d.allCharts(); len(cs) > 0 {
		out.WriteString("<script>\n/* Apache ECharts 5.6.0, Apache License 2.0 */\n")
		out.WriteString(strings.TrimRight(echartsJS, "\n"))
		out.WriteString("\n</script>\n<script>\n" + drawScript + "\n")
		for _, c := range cs {
			fmt.Fprintf(&out, "ordplanDraw(%q,%s);\n", c.id, c.option)
		}
		out.WriteString("</script>\n")
	}
	if strings.Contains(out.String(), `<div class="table-wrap">`) {
		out.WriteString("<script>\n" + tableScript + "\n</script>\n")
	}
	out.WriteString("</body>\n</html>\n")
	return out.Bytes(), nil
}

// rightCell opens a cell of a right-aligned column (numbers, p-values).
const rightCell = `<td style="text-align:right">`

// wrapNumberColumnProse puts the words in a cell of a right-aligned
// column, such as a p column's "not computed: defined for the cumulative
// logit model only", into a box of at most 16em (class why) in which they
// wrap: as one line, which the column's cells keep, they made the column as
// wide as the sentence and set its numbers far from the rest of the row.
// Cells of numbers, with or without a bracket or a count ("0.350 (0.107)",
// "<0.0001", "49.048 (13.463), 126 rows"), are left alone: a cell is prose
// when its text is longer than 24 characters, has a run of four letters
// and is mostly letters (of its characters other than spaces).
func wrapNumberColumnProse(h string) string {
	if !strings.Contains(h, rightCell) {
		return h
	}
	var out strings.Builder
	for {
		i := strings.Index(h, rightCell)
		if i < 0 {
			out.WriteString(h)
			return out.String()
		}
		i += len(rightCell)
		j := strings.Index(h[i:], "</td>")
		if j < 0 {
			out.WriteString(h)
			return out.String()
		}
		out.WriteString(h[:i])
		if cell := h[i : i+j]; cellIsProse(cell) {
			out.WriteString(`<span class="why">` + cell + `</span>`)
		} else {
			out.WriteString(cell)
		}
		h = h[i+j:]
	}
}

// cellIsProse reports whether a rendered cell's text (tags left out) is
// words rather than a number: over 24 characters, a run of four letters,
// and more letters than other characters besides spaces.
func cellIsProse(cell string) bool {
	var text strings.Builder
	inTag := false
	for _, r := range cell { // tags first: a "<" of the text is "&lt;" here
		switch {
		case r == '<':
			inTag = true
		case r == '>' && inTag:
			inTag = false
		case !inTag:
			text.WriteRune(r)
		}
	}
	n, run, words, letters, others := 0, 0, false, 0, 0
	for _, r := range html.UnescapeString(text.String()) {
		n++
		switch {
		case unicode.IsLetter(r):
			letters++
			if run++; run >= 4 {
				words = true
			}
		case unicode.IsSpace(r):
			run = 0
		default:
			others++
			run = 0
		}
	}
	return words && n > 24 && letters > others
}

// headingIDs gives the headings of report.html the anchors the table of
// contents links to (those of report.md), in order of appearance.
type headingIDs struct {
	heads []heading
	next  int
}

func (h *headingIDs) Generate(value []byte, kind ast.NodeKind) []byte {
	if kind == ast.KindHeading && h.next < len(h.heads) {
		h.next++
		return []byte(h.heads[h.next-1].slug)
	}
	return []byte(slugify(string(value)))
}

func (h *headingIDs) Put(value []byte) {}

// cellText renders text and code spans as goldmark does, and inside a
// table cell also marks where a long name may break: a cell narrower than
// a name such as `years_lived_at_address.through_road` then breaks it
// after "_", ".", "&", "/" or before a capital in a camel-case word,
// never inside a word of letters (the style sheet lets the browser break
// elsewhere only when one piece alone is wider than the cell's limit).
type cellText struct {
	plain map[ast.NodeKind]renderer.NodeRendererFunc
}

func newCellText() *cellText {
	c := &cellText{plain: map[ast.NodeKind]renderer.NodeRendererFunc{}}
	gmhtml.NewRenderer().RegisterFuncs(c)
	return c
}

// Register keeps goldmark's own functions, which cellText wraps.
func (c *cellText) Register(kind ast.NodeKind, f renderer.NodeRendererFunc) { c.plain[kind] = f }

func (c *cellText) RegisterFuncs(reg renderer.NodeRendererFuncRegisterer) {
	for _, kind := range []ast.NodeKind{ast.KindText, ast.KindCodeSpan} {
		plain := c.plain[kind]
		reg.Register(kind, func(w util.BufWriter, source []byte, n ast.Node, entering bool) (ast.WalkStatus, error) {
			if !inTableCell(n) {
				return plain(w, source, n, entering)
			}
			var buf bytes.Buffer
			bw := bufio.NewWriter(&buf)
			st, err := plain(bw, source, n, entering)
			if err == nil {
				err = bw.Flush()
			}
			if err != nil {
				return st, err
			}
			_, err = w.WriteString(nameBreaks(buf.String(), followingByte(n, source)))
			return st, err
		})
	}
}

// followingByte is the first byte of the text after n in its cell (0 if
// none): goldmark splits "a_b" into the texts "a", "_" and "b".
func followingByte(n ast.Node, source []byte) byte {
	next := n.NextSibling()
	if t, ok := next.(*ast.Text); ok {
		if v := t.Segment.Value(source); len(v) > 0 {
			return v[0]
		}
	}
	return 0
}

func inTableCell(n ast.Node) bool {
	for p := n.Parent(); p != nil; p = p.Parent() {
		if p.Kind() == extast.KindTableCell {
			return true
		}
	}
	return false
}

// nameBreaks inserts <wbr> into rendered HTML text (tags and character
// references left whole) after "_", "&amp;" and "/" and after a "." between
// a letter or digit and a letter, each only when more of the word follows,
// and between a lower-case and an upper-case letter that end a run of at
// least three lower-case letters (yearsLived, not the prefix of a name
// such as McFadden). follow is the byte after h in the cell's text (0 if
// none).
// lowerRun is the number of lower-case ASCII letters that end s.
func lowerRun(s string) int {
	n := 0
	for n < len(s) && s[len(s)-1-n] >= 'a' && s[len(s)-1-n] <= 'z' {
		n++
	}
	return n
}

// notAvailableAt reports whether the "/" before h[i] is that of a word
// "n/a" (not available), which stays whole: in a column of them broken at
// the slash it read "n/" over "a".
func notAvailableAt(h string, i int) bool {
	word := func(c byte) bool { return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' }
	return i >= 2 && h[i-2] == 'n' && (i < 3 || !word(h[i-3])) && i < len(h) && h[i] == 'a' && (i+1 == len(h) || !word(h[i+1]))
}

func nameBreaks(h string, follow byte) string {
	if !strings.ContainsAny(h, "_&./") && h == strings.ToLower(h) {
		return h
	}
	var b strings.Builder
	b.Grow(len(h) + 16)
	isLetter := func(c byte) bool { return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' }
	isWord := func(c byte) bool { return isLetter(c) || c >= '0' && c <= '9' || c >= 0x80 }
	for i := 0; i < len(h); {
		c := h[i]
		if c == '<' {
			j := strings.IndexByte(h[i:], '>')
			if j < 0 {
				b.WriteString(h[i:])
				break
			}
			b.WriteString(h[i : i+j+1])
			i += j + 1
			continue
		}
		if c == '&' {
			j := strings.IndexByte(h[i:], ';')
			if j < 0 {
				j = 0
			}
			ref := h[i : i+j+1]
			b.WriteString(ref)
			i += j + 1
			if ref == "&amp;" && (i < len(h) && isWord(h[i]) || i == len(h) && isWord(follow)) {
				b.WriteString("<wbr>")
			}
			continue
		}
		b.WriteByte(c)
		i++
		next := follow
		if i < len(h) {
			next = h[i]
		}
		switch {
		case c == '/' && notAvailableAt(h, i):
		case (c == '_' || c == '/') && isWord(next):
			b.WriteString("<wbr>")
		case c == '.' && i >= 2 && isWord(h[i-2]) && isLetter(next):
			b.WriteString("<wbr>")
		case c >= 'a' && c <= 'z' && next >= 'A' && next <= 'Z' && lowerRun(h[:i]) >= 3:
			b.WriteString("<wbr>")
		}
	}
	return b.String()
}
