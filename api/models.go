package api

import (
	"fmt"
	"log/slog"
	"sort"
	"sync"
	"sync/atomic"
	"time"

	"termgrove/model"
)

// loaded is one generation of a model file in service. It is immutable once
// published, so calls read it without locks.
type loaded struct {
	m   *model.Model
	ann Annotator
	at  time.Time
	gen int64
}

// reloadState is the outcome of the last load attempt of a model file.
type reloadState struct {
	at  time.Time
	err error
}

// served is one named model: its file and the generation in service.
type served struct {
	spec ModelSpec
	cur  atomic.Pointer[loaded]
	last atomic.Pointer[reloadState]
	mu   sync.Mutex // serialises loads of this file
}

// models are the served models by name, a set fixed at start.
type models struct {
	byName map[string]*served
	names  []string // sorted
}

func newModels(specs []ModelSpec) *models {
	ms := &models{byName: make(map[string]*served, len(specs))}
	for _, s := range specs {
		ms.byName[s.Name] = &served{spec: s}
		ms.names = append(ms.names, s.Name)
	}
	sort.Strings(ms.names)
	return ms
}

// load reads sv's file and, when it loads, swaps it into service. A file
// that fails keeps the old generation (if any) and returns the error.
func (sv *served) load(cfg *Config) error {
	sv.mu.Lock()
	defer sv.mu.Unlock()
	now := time.Now()
	m, err := cfg.Load(sv.spec.Path)
	var ann Annotator
	if err == nil && m == nil {
		err = fmt.Errorf("%s: loader returned no model", sv.spec.Path)
	}
	if err == nil {
		ann, err = cfg.NewAnnotator(m)
		if err != nil {
			err = fmt.Errorf("%s: %w", sv.spec.Path, err)
		}
	}
	sv.last.Store(&reloadState{at: now, err: err})
	if err != nil {
		return err
	}
	var gen int64 = 1
	if old := sv.cur.Load(); old != nil {
		gen = old.gen + 1
	}
	sv.cur.Store(&loaded{m: m, ann: ann, at: now, gen: gen})
	return nil
}

// Reload re-reads every model file; see the package comment. It returns the
// errors of the files that failed (their old model stays in service).
func (s *Server) Reload() error {
	var errs []error
	for _, name := range s.models.names {
		sv := s.models.byName[name]
		err := sv.load(&s.cfg)
		cur := sv.cur.Load()
		if err != nil {
			errs = append(errs, err)
			s.metrics.reloads.WithLabelValues(name, "error").Inc()
			s.log.Error("model reload failed; old model stays in service",
				slog.String("model", name), slog.String("path", sv.spec.Path),
				slog.Int64("generation", cur.gen), slog.String("error", err.Error()))
			continue
		}
		s.metrics.reloads.WithLabelValues(name, "ok").Inc()
		s.metrics.setModelInfo(name, sv.spec.Path, cur)
		s.log.Info("model reloaded", slog.String("model", name),
			slog.String("path", sv.spec.Path), slog.Int64("generation", cur.gen))
	}
	if len(errs) > 0 {
		return fmt.Errorf("%w: %v", ErrReload, errs)
	}
	return nil
}
