package templates

import (
	"strings"
	"testing"
)

// The help's notice says what the README's and the reports' cautions say
// of certification and of what prevails.
func TestHelpNotice(t *testing.T) {
	for _, s := range []string{"not a safety certification", "local codes", "machinery-safety standards", "competent, licensed practice"} {
		if !strings.Contains(strings.Join(strings.Fields(HelpNotice), " "), s) {
			t.Errorf("HelpNotice lacks %q", s)
		}
	}
}
