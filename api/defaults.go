package api

import (
	"errors"

	"termgrove/model"
)

// errNotWired is returned while the default model loader or annotator is not
// available in this build.
var errNotWired = errors.New("not available in this build")

func defaultLoad(path string) (*model.Model, error) {
	return nil, errNotWired
}

func defaultAnnotator(m *model.Model) (Annotator, error) {
	return nil, errNotWired
}
