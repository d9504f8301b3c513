// Package records reads a corpus: JSON Lines records
// {"id", "title", "text", "subjects": [IRIs], "date"} or a folder of .txt
// files (file name = id).
//
// CONTRACT: Read(path, opt, fn) calls fn per record in file order.
package records

// Record is one catalogue record. Line is its 1-based line in the file.
type Record struct {
	ID       string   `json:"id"`
	Title    string   `json:"title"`
	Text     string   `json:"text"`
	Subjects []string `json:"subjects"`
	Date     string   `json:"date"`
	Line     int      `json:"-"`
}
