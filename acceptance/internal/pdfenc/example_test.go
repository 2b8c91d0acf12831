package pdfenc_test

import (
	"fmt"

	"github.com/stepgate/stepgate/acceptance/internal/pdfenc"
)

func ExampleClean() {
	fmt.Printf("%q\n", pdfenc.Clean("SN-\x07\u202e42\tζ=0.6 \U0001F600"))
	// Output: "SN-42 ζ=0.6 ?"
}
