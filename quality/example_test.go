package quality_test

import (
	"fmt"

	"recto/quality"
)

func ExampleDistance() {
	// The classic worked example: kitten → sitting takes 3 edits.
	fmt.Println(quality.Distance([]rune("kitten"), []rune("sitting")))
	// Output: 3
}

func ExampleCompare() {
	c := quality.Compare("The Corvane mill\r\nground meal.", "Tbe Corvane rnill ground meal.", quality.NormOptions{})
	cer, _ := c.CER()
	wer, _ := c.WER()
	fmt.Printf("%d/%d chars, CER %.3f; %d/%d words, WER %.3f\n", c.CharErrors, c.Chars, cer, c.WordErrors, c.Words, wer)
	// Output: 3/29 chars, CER 0.103; 2/5 words, WER 0.400
}

func ExampleNormalize() {
	o := quality.NormOptions{PlainTypography: true, FoldCase: true}
	fmt.Printf("%q\n", quality.Normalize("\uFEFF  “Eﬃcient”\r\n  ſteam —  ", o))
	fmt.Println(o)
	// Output:
	// "\"efficient\" steam -"
	// NFC, white space collapsed and trimmed, case folded, punctuation kept, typography made plain
}

func ExampleGroup() {
	for _, c := range quality.Group(quality.Align([]rune("modern times."), []rune("rnodern tirnes"))) {
		fmt.Println(c)
	}
	// Output:
	// m→rn
	// m→rn
	// .→∅
}

func ExampleTitlePage() {
	fmt.Println(quality.TitlePage("corvane-ledger/1841/p0007.txt", "gt"))
	fmt.Println(quality.TitlePage("p0001.txt", "harbour-gazette"))
	// Output:
	// corvane-ledger corvane-ledger/1841/p0007
	// harbour-gazette p0001
}
