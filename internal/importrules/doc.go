// Package importrules holds no code, only a test that enforces corvane's
// layering: the math packages import only the standard library, gonum and
// lower math packages; domain, csvio and service import no HTTP and no SQL
// driver; only the stores import database drivers; only httpapi imports gin.
package importrules
