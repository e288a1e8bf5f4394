// Package jsonnum holds the one rule for numbers in corvane's JSON reports:
// rounded to 1e-6 (finer than any measurement, coarser than floating-point
// noise such as 0.9999999999999999 or 72.64999999999995), never -0. It is
// pure (standard library only).
package jsonnum

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
)

// Round rounds x to 1e-6 and turns -0 into 0.
func Round(x float64) float64 {
	x = math.Round(x*1e6) / 1e6
	if x == 0 {
		return 0
	}
	return x
}

// RoundAll rewrites the JSON document b with every number rounded by Round,
// keeping the order of keys and every string as it is. Integers stay
// integers.
func RoundAll(b []byte) ([]byte, error) {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var out bytes.Buffer
	out.Grow(len(b))
	// Per open container: is it an object, and how many tokens it has had.
	type level struct {
		object bool
		n      int
	}
	var stack []level
	for {
		t, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if d, ok := t.(json.Delim); ok && (d == '}' || d == ']') {
			stack = stack[:len(stack)-1]
			out.WriteByte(byte(d))
			continue
		}
		if len(stack) > 0 {
			top := &stack[len(stack)-1]
			switch {
			case top.object && top.n%2 == 1:
				out.WriteByte(':')
			case top.n > 0:
				out.WriteByte(',')
			}
			top.n++
		}
		switch v := t.(type) {
		case json.Delim:
			out.WriteByte(byte(v))
			stack = append(stack, level{object: v == '{'})
		case json.Number:
			out.WriteString(roundNumber(v))
		case string:
			s, _ := json.Marshal(v)
			out.Write(s)
		case bool:
			out.WriteString(strconv.FormatBool(v))
		case nil:
			out.WriteString("null")
		default:
			return nil, fmt.Errorf("jsonnum: unexpected token %T", t)
		}
	}
	return out.Bytes(), nil
}

func roundNumber(n json.Number) string {
	if _, err := n.Int64(); err == nil {
		return n.String()
	}
	f, err := n.Float64()
	if err != nil || math.IsInf(f, 0) {
		return n.String()
	}
	return strconv.FormatFloat(Round(f), 'f', -1, 64)
}
