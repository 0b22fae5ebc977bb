package main

import "fmt"

// counted writes n with its noun in the number n calls for: "1 change",
// "0 changes", "2 pages" (English count nouns take the plural for every
// number but one, zero included: common practice).
func counted(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}
