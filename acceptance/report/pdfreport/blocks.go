package pdfreport

import "strings"

// blockKind says how a block of template text is printed.
type blockKind int

// The kinds of block in a text template such as templates.Cautions.
const (
	blockParagraph blockKind = iota // lines joined into one paragraph
	blockHeading                    // a line starting "# "
	blockList                       // lines starting "- ", one item each
)

// textBlock is one unit of template text. A heading has one line, the text
// after "# "; a list has one line per item, without the "- "; a paragraph
// has its lines as written, to be joined with spaces.
type textBlock struct {
	Kind  blockKind
	Lines []string
}

// textBlocks splits template text into blocks: blank lines separate blocks, a
// line starting "# " is a heading on its own, and a block whose lines start
// with "- " is a list (a line without the dash continues the item above).
// The same text reads as Markdown, so it can be pasted into a README.
func textBlocks(text string) []textBlock {
	var out []textBlock
	var cur *textBlock
	flush := func() {
		if cur != nil && len(cur.Lines) > 0 {
			out = append(out, *cur)
		}
		cur = nil
	}
	for _, raw := range strings.Split(strings.ReplaceAll(text, "\r\n", "\n"), "\n") {
		line := strings.TrimSpace(raw)
		switch {
		case line == "":
			flush()
		case strings.HasPrefix(line, "# "):
			flush()
			out = append(out, textBlock{Kind: blockHeading, Lines: []string{strings.TrimSpace(line[2:])}})
		case strings.HasPrefix(line, "- "):
			if cur == nil || cur.Kind != blockList {
				flush()
				cur = &textBlock{Kind: blockList}
			}
			cur.Lines = append(cur.Lines, strings.TrimSpace(line[2:]))
		default:
			if cur == nil {
				cur = &textBlock{Kind: blockParagraph}
			}
			if cur.Kind == blockList {
				cur.Lines[len(cur.Lines)-1] += " " + line
			} else {
				cur.Lines = append(cur.Lines, line)
			}
		}
	}
	flush()
	return out
}
