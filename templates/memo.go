// Package templates holds the text that grantworth's reports are made of,
// embedded in the binary with go:embed.
//
// memo/*.tmpl are the memo's paragraphs, in text/template syntax over the
// report Model. A blank line separates paragraphs; a line starting with
// "## " is a sub-heading and one starting with "- " a bullet.
package templates

import "embed"

// Memo is the memo's text templates, under memo/.
//
//go:embed memo/*.tmpl
var Memo embed.FS
