package catalog

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"unicode"
)

// splitFields splits one line of CSV text into trimmed fields. A field may be
// quoted ("" inside it stands for one quote); a quote inside an unquoted
// field is taken literally. On a malformed quoted field it returns the
// 1-based number of that field, its raw text and the reason.
func splitFields(line string) (fields []string, badField int, badText, reason string) {
	i := 0
	for {
		j := i
		for j < len(line) && (line[j] == ' ' || line[j] == '\t') {
			j++
		}
		if j < len(line) && line[j] == '"' {
			var b strings.Builder
			k := j + 1
			closed := false
			for k < len(line) {
				c := line[k]
				if c == '"' {
					if k+1 < len(line) && line[k+1] == '"' {
						b.WriteByte('"')
						k += 2
						continue
					}
					closed = true
					k++
					break
				}
				b.WriteByte(c)
				k++
			}
			if !closed {
				return fields, len(fields) + 1, strings.TrimSpace(line[j:]),
					`quoted field has no closing quote (a quoted field must end on its own line)`
			}
			for k < len(line) && (line[k] == ' ' || line[k] == '\t') {
				k++
			}
			if k < len(line) && line[k] != ',' {
				raw := line[j:]
				if c := strings.IndexByte(line[k:], ','); c >= 0 {
					raw = line[j : k+c]
				}
				return fields, len(fields) + 1, strings.TrimSpace(raw),
					`text after the closing quote; expected a comma (write "" for a quote inside a quoted field)`
			}
			fields = append(fields, strings.TrimSpace(b.String()))
			if k == len(line) {
				return fields, 0, "", ""
			}
			i = k + 1
			continue
		}
		k := strings.IndexByte(line[i:], ',')
		if k < 0 {
			return append(fields, strings.TrimSpace(line[i:])), 0, "", ""
		}
		fields = append(fields, strings.TrimSpace(line[i:i+k]))
		i += k + 1
	}
}

// numberStatus says how a field failed to parse as a number.
type numberStatus int

const (
	numberOK        numberStatus = iota
	numberMalformed              // not a decimal number
	numberNonFinite              // NaN or an infinity spelled out
	numberOverflow               // too large for a float64
)

// parseNumber parses a decimal number such as "12", "-0.25", "+3.", ".5" or
// "4e-2". Hexadecimal, underscores, NaN and infinities are refused.
func parseNumber(s string) (float64, numberStatus) {
	switch strings.ToLower(strings.TrimLeft(s, "+-")) {
	case "nan", "inf", "infinity":
		return 0, numberNonFinite
	}
	if s == "" {
		return 0, numberMalformed
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= '0' && c <= '9' || c == '.' || c == 'e' || c == 'E' || c == '+' || c == '-') {
			return 0, numberMalformed
		}
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		if !errors.Is(err, strconv.ErrRange) {
			return 0, numberMalformed
		}
		if math.IsInf(v, 0) {
			return 0, numberOverflow
		}
		// A number too small for a float64 has been rounded to zero or a
		// subnormal, which is what it means.
	}
	return v, numberOK
}

// looksSexagesimal reports whether s has the separators of a sexagesimal
// angle: colons, inner spaces or unit letters.
func looksSexagesimal(s string) bool {
	return strings.ContainsAny(s, ": \thHdDmMsS")
}

// parseSexagesimal parses an angle of two or three parts separated by colons,
// by spaces, or by the unit letters h/m/s (hours, for right ascension) or
// d/m/s (degrees). The sign applies to the whole angle; only the last part
// may have a fraction; minutes and seconds lie in [0, 60). It returns the
// angle in degrees (hours × 15 for right ascension).
func parseSexagesimal(s string, hours bool) (float64, string) {
	neg := false
	rest := s
	if strings.HasPrefix(rest, "+") || strings.HasPrefix(rest, "-") {
		neg = rest[0] == '-'
		rest = strings.TrimSpace(rest[1:])
	}
	if neg && hours {
		return 0, "right ascension takes no sign; expected hh:mm:ss.s from 00:00:00 to below 24:00:00"
	}
	units := "dms"
	if hours {
		units = "hms"
	}
	var parts []string
	switch {
	case strings.Contains(rest, ":"):
		parts = strings.Split(rest, ":")
		for i := range parts {
			parts[i] = strings.TrimSpace(parts[i])
		}
	case strings.IndexFunc(rest, unicode.IsLetter) >= 0:
		var reason string
		parts, reason = splitUnitLetters(rest, units)
		if reason != "" {
			return 0, reason
		}
	default:
		parts = strings.Fields(rest)
	}
	if len(parts) < 1 || len(parts) > 3 {
		return 0, "a sexagesimal angle has two or three parts"
	}
	var v [3]float64
	for i, p := range parts {
		last := i == len(parts)-1
		if !unsignedDecimal(p, last) {
			if p == "" {
				return 0, "empty part in sexagesimal angle"
			}
			if !last && unsignedDecimal(p, true) {
				return 0, "only the last part of a sexagesimal angle may have a fraction"
			}
			return 0, "expected digits in each part of a sexagesimal angle"
		}
		x, err := strconv.ParseFloat(p, 64)
		if err != nil {
			return 0, "sexagesimal part out of range"
		}
		v[i] = x
	}
	if len(parts) == 1 && !strings.ContainsFunc(rest, unicode.IsLetter) {
		return 0, "a sexagesimal angle has two or three parts"
	}
	if v[1] >= 60 {
		return 0, "minutes must be in [0, 60)"
	}
	if v[2] >= 60 {
		return 0, "seconds must be in [0, 60)"
	}
	deg := v[0] + v[1]/60 + v[2]/3600
	if hours {
		deg *= 15
	}
	if neg {
		deg = -deg
	}
	return deg, ""
}

// splitUnitLetters splits an angle such as "12h34m56.7s" or "-5d 30m" into
// its number parts, checking that the unit letters come in the order of
// units. The last letter may be left out when an earlier one is given.
func splitUnitLetters(s, units string) ([]string, string) {
	var parts []string
	pos := 0
	for pos < len(s) {
		if len(parts) == 3 {
			return nil, "text after the seconds of a sexagesimal angle"
		}
		start := pos
		for pos < len(s) && (s[pos] >= '0' && s[pos] <= '9' || s[pos] == '.') {
			pos++
		}
		num := s[start:pos]
		for pos < len(s) && (s[pos] == ' ' || s[pos] == '\t') {
			pos++
		}
		want := units[len(parts)]
		if pos == len(s) {
			if len(parts) == 0 {
				return nil, "missing unit letter " + strconv.QuoteRune(rune(want))
			}
			parts = append(parts, num)
			break
		}
		if c := s[pos] | 0x20; c != want {
			return nil, "expected unit letters " + strings.Join(strings.Split(units, ""), ", ") + " in that order"
		}
		pos++
		for pos < len(s) && (s[pos] == ' ' || s[pos] == '\t') {
			pos++
		}
		parts = append(parts, num)
	}
	return parts, ""
}

// unsignedDecimal reports whether s is a run of digits, with a fraction
// ("12.5", "12.", ".5") if fraction is true.
func unsignedDecimal(s string, fraction bool) bool {
	digits, dots := 0, 0
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c >= '0' && c <= '9':
			digits++
		case c == '.' && fraction:
			dots++
		default:
			return false
		}
	}
	return digits > 0 && dots <= 1
}

// printable reports whether s holds no control characters.
func printable(s string) bool {
	return strings.IndexFunc(s, unicode.IsControl) < 0
}
