package pdfreport

import "strings"

// BlockKind says how a block of template text is printed.
type BlockKind int

// The kinds of block in a text template such as templates.Cautions.
const (
	BlockParagraph BlockKind = iota // lines joined into one paragraph
	BlockHeading                    // a line starting "# "
	BlockList                       // lines starting "- ", one item each
)

// Block is one unit of template text. A heading has one line, the text
// after "# "; a list has one line per item, without the "- "; a paragraph
// has its lines as written, to be joined with spaces.
type Block struct {
	Kind  BlockKind
	Lines []string
}

// Blocks splits template text into blocks: blank lines separate blocks, a
// line starting "# " is a heading on its own, and a block whose lines start
// with "- " is a list (a line without the dash continues the item above).
// The same text reads as Markdown, so it can be pasted into a README.
func Blocks(text string) []Block {
	var out []Block
	var cur *Block
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
			out = append(out, Block{Kind: BlockHeading, Lines: []string{strings.TrimSpace(line[2:])}})
		case strings.HasPrefix(line, "- "):
			if cur == nil || cur.Kind != BlockList {
				flush()
				cur = &Block{Kind: BlockList}
			}
			cur.Lines = append(cur.Lines, strings.TrimSpace(line[2:]))
		default:
			if cur == nil {
				cur = &Block{Kind: BlockParagraph}
			}
			if cur.Kind == BlockList {
				cur.Lines[len(cur.Lines)-1] += " " + line
			} else {
				cur.Lines = append(cur.Lines, line)
			}
		}
	}
	flush()
	return out
}
