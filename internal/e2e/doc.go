// Package e2e holds end-to-end tests: they build the real corvane binary,
// start `corvane serve` on a free loopback port over a temporary SQLite file
// and (when a PostgreSQL server can be started) over PostgreSQL, and talk HTTP
// to it. The package has no non-test code.
package e2e
