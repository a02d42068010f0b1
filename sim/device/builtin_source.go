package device

import "io/fs"

// BuiltinSource returns the text of the built-in process called name, as
// its file holds it, so that a run can keep a copy of the process it used.
func BuiltinSource(name string) ([]byte, bool) {
	file := "processes/" + name + ".yaml"
	if !fs.ValidPath(file) {
		return nil, false
	}
	data, err := builtinFS.ReadFile(file)
	return data, err == nil
}
