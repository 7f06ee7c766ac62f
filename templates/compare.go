package templates

import "embed"

// Compare is the text of the design comparison's PDF (grantworth compare),
// under compare/, in the same syntax as Memo over the report's
// CompareModel.
//
//go:embed compare/*.tmpl
var Compare embed.FS
