package correct

// Temporary stand-in for quality.Align until the quality package lands on
// main; it has the same contract (Levenshtein alignment, unit costs) and is
// deleted when Train switches to quality.Align.

type opKind uint8

const (
	opMatch opKind = iota
	opSub
	opIns // hypothesis has an extra rune: R = 0
	opDel // hypothesis lacks a reference rune: H = 0
)

type alignOp struct {
	Kind opKind
	R, H rune
}

// alignRunes returns a minimum-cost alignment of ref and hyp.
func alignRunes(ref, hyp []rune) []alignOp {
	n, m := len(ref), len(hyp)
	w := m + 1
	d := make([]int32, (n+1)*w)
	for j := 0; j <= m; j++ {
		d[j] = int32(j)
	}
	for i := 1; i <= n; i++ {
		row := d[i*w : (i+1)*w]
		prev := d[(i-1)*w : i*w]
		row[0] = int32(i)
		for j := 1; j <= m; j++ {
			c := prev[j-1]
			if ref[i-1] != hyp[j-1] {
				c++
			}
			if v := prev[j] + 1; v < c {
				c = v
			}
			if v := row[j-1] + 1; v < c {
				c = v
			}
			row[j] = c
		}
	}
	ops := make([]alignOp, 0, max(n, m))
	i, j := n, m
	for i > 0 || j > 0 {
		cur := d[i*w+j]
		switch {
		case i > 0 && j > 0 && ref[i-1] == hyp[j-1] && cur == d[(i-1)*w+j-1]:
			ops = append(ops, alignOp{opMatch, ref[i-1], hyp[j-1]})
			i, j = i-1, j-1
		case i > 0 && j > 0 && cur == d[(i-1)*w+j-1]+1:
			ops = append(ops, alignOp{opSub, ref[i-1], hyp[j-1]})
			i, j = i-1, j-1
		case i > 0 && cur == d[(i-1)*w+j]+1:
			ops = append(ops, alignOp{opDel, ref[i-1], 0})
			i--
		default:
			ops = append(ops, alignOp{opIns, 0, hyp[j-1]})
			j--
		}
	}
	for a, b := 0, len(ops)-1; a < b; a, b = a+1, b-1 {
		ops[a], ops[b] = ops[b], ops[a]
	}
	return ops
}
