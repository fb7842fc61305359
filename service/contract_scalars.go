package service

import (
	"fmt"
	"math"
	"strconv"
	"unicode/utf8"

	"lipidsvc/api"
)

// str reads a string and returns its raw bytes (plain: no escapes, so they
// are its value) or its decoded value.
func (v *validator) str() (s []byte, plain bool, err error) {
	b := v.b
	i := v.i + 1
	start := i
	plain = true
	for i < len(b) {
		c := b[i]
		switch {
		case c == '"':
			v.i = i + 1
			if plain {
				return b[start:i], true, nil
			}
			return jsonUnquote(b[start:i]), false, nil
		case c < 0x20:
			v.i = i
			return nil, false, v.syntax("control character in a string")
		case c == '\\':
			plain = false
			i++
			if i >= len(b) {
				v.i = i
				return nil, false, v.syntax("unexpected end of the body")
			}
			switch b[i] {
			case '"', '\\', '/', 'b', 'f', 'n', 'r', 't':
				i++
			case 'u':
				if i+4 >= len(b) || !isHex4(b[i+1:i+5]) {
					v.i = i
					return nil, false, v.syntax("invalid \\u escape")
				}
				i += 5
			default:
				v.i = i
				return nil, false, v.syntax("invalid escape")
			}
		default:
			i++
		}
	}
	v.i = i
	return nil, false, v.syntax("unexpected end of the body")
}

func isHex4(b []byte) bool {
	for _, c := range b {
		if !((c >= '0' && c <= '9') || (c >= 'a' && c <= 'f') || (c >= 'A' && c <= 'F')) {
			return false
		}
	}
	return true
}

// jsonUnquote decodes the inside of a JSON string whose escapes are known
// to be valid, as encoding/json does (a lone surrogate becomes U+FFFD).
func jsonUnquote(b []byte) []byte {
	out := make([]byte, 0, len(b))
	for i := 0; i < len(b); {
		if b[i] != '\\' {
			out = append(out, b[i])
			i++
			continue
		}
		switch b[i+1] {
		case 'b':
			out = append(out, '\b')
		case 'f':
			out = append(out, '\f')
		case 'n':
			out = append(out, '\n')
		case 'r':
			out = append(out, '\r')
		case 't':
			out = append(out, '\t')
		case 'u':
			r, _ := strconv.ParseUint(string(b[i+2:i+6]), 16, 32)
			rr := rune(r)
			i += 6
			if rr >= 0xD800 && rr < 0xDC00 && i+6 <= len(b) && b[i] == '\\' && b[i+1] == 'u' {
				if lo, err := strconv.ParseUint(string(b[i+2:i+6]), 16, 32); err == nil && lo >= 0xDC00 && lo < 0xE000 {
					rr = (rr-0xD800)<<10 + (rune(lo) - 0xDC00) + 0x10000
					i += 6
				}
			}
			if rr >= 0xD800 && rr < 0xE000 {
				rr = utf8.RuneError
			}
			out = utf8.AppendRune(out, rr)
			continue
		default: // " \ /
			out = append(out, b[i+1])
		}
		i += 2
	}
	return out
}

// runeCount counts a string's length as the validator of the contract
// does: in runes, each invalid UTF-8 byte one (encoding/json turns it into
// U+FFFD).
func runeCount(s []byte) uint64 { return uint64(utf8.RuneCount(s)) }

func (v *validator) checkString(n *schemaNode, s []byte, plain bool) {
	if len(n.enum) > 0 {
		ok := false
		for _, e := range n.enum {
			if string(s) == e && (plain || utf8.Valid(s)) {
				ok = true
				break
			}
		}
		if !ok {
			v.violation("must be one of: " + n.enumText)
			return
		}
	}
	if n.minLen > 0 || n.hasMaxLen {
		l := runeCount(s)
		if l < n.minLen {
			v.violation(fmt.Sprintf("must have at least %d characters", n.minLen))
		}
		if n.hasMaxLen && l > n.maxLen {
			v.violation(fmt.Sprintf("must have at most %d characters", n.maxLen))
		}
	}
}

// number reads a number by the JSON grammar and checks it.
func (v *validator) number(n *schemaNode) error {
	start := v.i
	end, ok := api.JSONNumberEnd(v.b, start)
	v.i = end
	if !ok {
		return v.syntax("invalid number")
	}
	b, i := v.b, end
	if n.any {
		return nil
	}
	x, err := strconv.ParseFloat(string(b[start:i]), 64)
	if err != nil {
		v.violation("the number is outside the range of a 64-bit floating-point number")
		return nil
	}
	if len(n.enum) > 0 {
		v.violation("must be one of: " + n.enumText)
		return nil
	}
	if n.integer && x != math.Trunc(x) {
		v.violation("must be an integer")
	}
	switch {
	case n.hasMin && n.exclMin && !(x > n.min):
		v.violation(fmt.Sprintf("must be above %g", n.min))
	case n.hasMin && !n.exclMin && x < n.min:
		v.violation(fmt.Sprintf("must be at least %g", n.min))
	}
	switch {
	case n.hasMax && n.exclMax && !(x < n.max):
		v.violation(fmt.Sprintf("must be below %g", n.max))
	case n.hasMax && !n.exclMax && x > n.max:
		v.violation(fmt.Sprintf("must be at most %g", n.max))
	}
	return nil
}
