package templates

import (
	_ "embed"
	"strings"
)

// wordingText holds the report phrases, one per "[key]" section.
//
//go:embed wording.txt
var wordingText string

var phrases = parsePhrases(wordingText)

// Phrase returns the report phrase filed under key in wording.txt, its lines
// joined with single spaces, and false when there is none.
func Phrase(key string) (string, bool) {
	p, ok := phrases[key]
	return p, ok
}

// MustPhrase returns the phrase filed under key, and panics when
// wording.txt has none: for the fixed texts a package reads once at start,
// whose keys the tests check.
func MustPhrase(key string) string {
	p, ok := phrases[key]
	if !ok {
		panic("templates: wording.txt has no phrase [" + key + "]")
	}
	return p
}

// PhraseKeys lists the keys of wording.txt in file order.
func PhraseKeys() []string {
	var keys []string
	for _, line := range strings.Split(wordingText, "\n") {
		if k, ok := phraseKey(line); ok {
			keys = append(keys, k)
		}
	}
	return keys
}

// parsePhrases splits wording text into phrases: "[key]" starts one, lines
// starting with "#" are comments, other lines are joined with spaces.
func parsePhrases(text string) map[string]string {
	out := map[string]string{}
	key := ""
	var words []string
	flush := func() {
		if key != "" {
			out[key] = strings.Join(words, " ")
		}
		words = words[:0]
	}
	for _, raw := range strings.Split(strings.ReplaceAll(text, "\r\n", "\n"), "\n") {
		line := strings.TrimSpace(raw)
		if k, ok := phraseKey(line); ok {
			flush()
			key = k
			continue
		}
		if line == "" || strings.HasPrefix(line, "#") || key == "" {
			continue
		}
		words = append(words, strings.Fields(line)...)
	}
	flush()
	return out
}

func phraseKey(line string) (string, bool) {
	line = strings.TrimSpace(line)
	if len(line) > 2 && line[0] == '[' && line[len(line)-1] == ']' && !strings.ContainsAny(line[1:len(line)-1], "[] ") {
		return line[1 : len(line)-1], true
	}
	return "", false
}
