package api

import (
	"termgrove/annotate"
	"termgrove/model"
)

func defaultLoad(path string) (*model.Model, error) { return model.Load(path) }

func defaultAnnotator(m *model.Model) (Annotator, error) { return annotate.New(m) }
