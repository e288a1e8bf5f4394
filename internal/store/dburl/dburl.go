// Package dburl tells which store a database address names and hides the
// secrets in it. It sits below both the stores and the configuration: it
// imports nothing of corvane, so the stores own what they need and the
// configuration may use it, and the dependency runs one way.
//
// A PostgreSQL address is a postgres:// or postgresql:// URL, or a libpq
// key=value connection string ("host=db dbname=corvane user=ana"). Anything
// else is the path of an SQLite file.
package dburl

import (
	"errors"
	"net/url"
	"strings"
	"unicode"
)

// Mask replaces a password in what Redact returns.
const Mask = "xxxxx"

// libpqKeys are the connection parameters libpq documents; a key=value string
// must start with one of them to be taken for PostgreSQL, so a file path
// that merely contains "=" stays a path.
var libpqKeys = map[string]bool{
	"host": true, "hostaddr": true, "port": true, "dbname": true, "user": true, "password": true,
	"passfile": true, "require_auth": true, "channel_binding": true, "connect_timeout": true,
	"client_encoding": true, "options": true, "application_name": true,
	"fallback_application_name": true, "keepalives": true, "keepalives_idle": true,
	"keepalives_interval": true, "keepalives_count": true, "tcp_user_timeout": true,
	"replication": true, "gssencmode": true, "sslmode": true, "requiressl": true, "sslnegotiation": true,
	"sslcompression": true, "sslcert": true, "sslkey": true, "sslpassword": true, "sslcertmode": true,
	"sslrootcert": true, "sslcrl": true, "sslcrldir": true, "sslsni": true, "requirepeer": true,
	"ssl_min_protocol_version": true, "ssl_max_protocol_version": true, "krbsrvname": true,
	"gsslib": true, "gssdelegation": true, "service": true, "target_session_attrs": true,
	"load_balance_hosts": true, "search_path": true,
}

// secretKeys are the parameters whose values are hidden.
var secretKeys = map[string]bool{"password": true, "sslpassword": true, "sslkey": true}

// IsURL reports whether s is a postgres:// or postgresql:// URL.
func IsURL(s string) bool {
	l := strings.ToLower(strings.TrimSpace(s))
	return strings.HasPrefix(l, "postgres://") || strings.HasPrefix(l, "postgresql://")
}

// IsKeyValue reports whether s is a libpq key=value connection string: its
// first word is a libpq parameter name followed by "=".
func IsKeyValue(s string) bool {
	s = strings.TrimSpace(s)
	i := strings.IndexFunc(s, func(r rune) bool { return r == '=' || unicode.IsSpace(r) })
	if i <= 0 {
		return false
	}
	rest := strings.TrimLeftFunc(s[i:], unicode.IsSpace)
	return strings.HasPrefix(rest, "=") && libpqKeys[strings.ToLower(s[:i])]
}

// Sets reports whether the PostgreSQL address s sets the parameter key (a
// URL's query, or a pair of a key=value string).
func Sets(s, key string) bool {
	if IsURL(s) {
		u, err := url.Parse(strings.TrimSpace(s))
		return err == nil && u.Query().Has(key)
	}
	pairs, err := parseKeyValue(s)
	if err != nil {
		return false
	}
	for _, p := range pairs {
		if p.key == key {
			return true
		}
	}
	return false
}

// IsPostgres reports whether s names a PostgreSQL server (a URL or a
// key=value string) rather than an SQLite file.
func IsPostgres(s string) bool { return IsURL(s) || IsKeyValue(s) }

// Check reports why a PostgreSQL address cannot be read, without quoting
// it; nil for one that can and for an SQLite path.
func Check(s string) error {
	switch {
	case IsURL(s):
		if _, err := url.Parse(strings.TrimSpace(s)); err != nil {
			var ue *url.Error
			if errors.As(err, &ue) {
				return errors.New("not a valid URL: " + ue.Err.Error())
			}
			return errors.New("not a valid URL")
		}
	case IsKeyValue(s):
		if _, err := parseKeyValue(s); err != nil {
			return err
		}
	}
	return nil
}

// Redact returns s safe to print: the password of a PostgreSQL address (in
// the user information, a password, sslpassword or sslkey query parameter,
// or key=value pair) is replaced by [Mask]. An SQLite path comes back
// unchanged; a PostgreSQL address that does not parse is hidden whole, since
// it may still hold a secret.
func Redact(s string) string {
	switch {
	case IsURL(s):
		return redactURL(s)
	case IsKeyValue(s):
		kv, err := parseKeyValue(s)
		if err != nil {
			return "(unparsable PostgreSQL connection string hidden)"
		}
		parts := make([]string, len(kv))
		for i, p := range kv {
			v := p.value
			if secretKeys[strings.ToLower(p.key)] {
				v = Mask
			}
			parts[i] = p.key + "=" + quote(v)
		}
		return strings.Join(parts, " ")
	}
	return s
}

// RedactIn returns text with every occurrence of the address s replaced by
// its redacted form, and every password in it masked: for driver messages
// that quote the address they were given.
func RedactIn(text, s string) string {
	if !IsPostgres(s) {
		return text
	}
	if t := strings.TrimSpace(s); t != "" {
		text = strings.ReplaceAll(text, t, Redact(t))
	}
	for _, pw := range passwords(s) {
		if pw != "" && pw != Mask {
			text = strings.ReplaceAll(text, pw, Mask)
			if e := url.QueryEscape(pw); e != pw {
				text = strings.ReplaceAll(text, e, Mask)
			}
			if e := url.PathEscape(pw); e != pw {
				text = strings.ReplaceAll(text, e, Mask)
			}
		}
	}
	return text
}

// passwords returns the secret values in s.
func passwords(s string) []string {
	var out []string
	switch {
	case IsURL(s):
		u, err := url.Parse(strings.TrimSpace(s))
		if err != nil {
			// Cannot tell the parts apart: hide what follows the scheme's
			// user name up to the host, the usual place of a password.
			rest := s[strings.Index(s, "://")+3:]
			if at := strings.LastIndex(rest, "@"); at > 0 {
				if c := strings.Index(rest[:at], ":"); c >= 0 {
					out = append(out, rest[c+1:at])
				}
			}
			return out
		}
		if u.User != nil {
			if p, ok := u.User.Password(); ok {
				out = append(out, p)
			}
		}
		for k, vs := range u.Query() {
			if secretKeys[strings.ToLower(k)] {
				out = append(out, vs...)
			}
		}
	case IsKeyValue(s):
		kv, _ := parseKeyValue(s)
		for _, p := range kv {
			if secretKeys[strings.ToLower(p.key)] {
				out = append(out, p.value)
			}
		}
	}
	return out
}

func redactURL(s string) string {
	u, err := url.Parse(strings.TrimSpace(s))
	if err != nil {
		return "postgres://(unparsable URL hidden)"
	}
	if u.User != nil {
		if _, has := u.User.Password(); has {
			u.User = url.UserPassword(u.User.Username(), Mask)
		}
	}
	q := u.Query()
	changed := false
	for k := range q {
		if secretKeys[strings.ToLower(k)] {
			q.Set(k, Mask)
			changed = true
		}
	}
	if changed {
		u.RawQuery = q.Encode()
	}
	return u.String()
}

type pair struct{ key, value string }

// parseKeyValue splits a libpq key=value string: values may be single-quoted,
// with \' and \\ escapes, as libpq documents.
func parseKeyValue(s string) ([]pair, error) {
	var out []pair
	i := 0
	n := len(s)
	for {
		for i < n && unicode.IsSpace(rune(s[i])) {
			i++
		}
		if i == n {
			return out, nil
		}
		k := i
		for i < n && s[i] != '=' && !unicode.IsSpace(rune(s[i])) {
			i++
		}
		key := s[k:i]
		for i < n && unicode.IsSpace(rune(s[i])) {
			i++
		}
		if i == n || s[i] != '=' || key == "" {
			return nil, errors.New("a key=value connection string needs key=value pairs separated by spaces")
		}
		i++
		for i < n && unicode.IsSpace(rune(s[i])) {
			i++
		}
		var v strings.Builder
		if i < n && s[i] == '\'' {
			i++
			closed := false
			for i < n {
				c := s[i]
				if c == '\\' && i+1 < n {
					v.WriteByte(s[i+1])
					i += 2
					continue
				}
				if c == '\'' {
					i++
					closed = true
					break
				}
				v.WriteByte(c)
				i++
			}
			if !closed {
				return nil, errors.New("a key=value connection string has an unterminated quoted value")
			}
		} else {
			for i < n && !unicode.IsSpace(rune(s[i])) {
				if s[i] == '\\' && i+1 < n {
					i++
				}
				v.WriteByte(s[i])
				i++
			}
		}
		out = append(out, pair{key, v.String()})
	}
}

// quote writes v as libpq reads it back.
func quote(v string) string {
	if v != "" && !strings.ContainsAny(v, " \t\n\r'\\") {
		return v
	}
	r := strings.NewReplacer(`\`, `\\`, `'`, `\'`)
	return "'" + r.Replace(v) + "'"
}
