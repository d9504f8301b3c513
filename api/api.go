// Package api is the gRPC annotation service of termgrove: the
// termgrove.v1.AnnotationService (proto/termgrove/v1) over one or more fitted
// models, with the standard grpc.health.v1 health service, server
// reflection, TLS and mutual TLS, request limits, Prometheus metrics on a
// separate HTTP listener, and hot reload of model files.
//
//	s, err := api.NewServer(api.Config{Models: []api.ModelSpec{{Name: "lcsh", Path: "lcsh.grove"}}})
//	if err != nil { ... }
//	err = s.Run(ctx) // serves until ctx ends, then drains within Config.Grace
//
// Limits. At most Config.MaxConcurrent annotations run at once (default: one
// per core). An Annotate call that finds every slot taken waits in a short
// queue: at most MaxConcurrent + Config.MaxWaiting Annotate calls are inside
// the server at once (default MaxWaiting: 2 × MaxConcurrent), and a call
// beyond is refused with RESOURCE_EXHAUSTED in the transport, before a
// goroutine is started or its message read, so that refusals stay cheap and
// no queue grows under overload. With MaxWaiting negative a call is refused
// as soon as every slot is taken. A stream message takes the free slots, up
// to one per core; with none free it waits for one when fewer than
// MaxWaiting messages wait already, else its records get RESOURCE_EXHAUSTED.
// Unary calls without a deadline get Config.DefaultDeadline; streams live
// until the client ends them or the server shuts down. A request that fails validation gets INVALID_ARGUMENT with a
// google.rpc.BadRequest detail listing every bad field. An unknown model or
// concept gets NOT_FOUND. A panic in a handler becomes INTERNAL for that call
// only, and is logged with its stack.
//
// Reload. Reload re-reads every model file and swaps each one in with an
// atomic pointer store: calls in progress finish on the model they started
// with, later calls see the new one. A file that fails to load leaves the old
// model in service; the failure is logged, counted in the
// termgrove_model_reloads_total metric and shown by GetModel.
//
// Gap reports. GetGapReport answers through Config.Gaps (ReportGaps wraps
// report.Gaps over the model alone); without one it is UNIMPLEMENTED.
//
// Health. The health service reports "" (overall) and
// "termgrove.v1.AnnotationService" as SERVING while the server serves, and
// one service per model named "termgrove.v1.AnnotationService/<name>".
// During shutdown every status turns NOT_SERVING first, so that load
// balancers stop sending new calls while in-flight calls drain.
package api
