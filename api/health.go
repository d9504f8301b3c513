package api

import (
	"context"

	healthgrpc "google.golang.org/grpc/health/grpc_health_v1"

	"google.golang.org/grpc/health"
)

// healthService is the standard health server whose Watch streams end when
// the server shuts down. Clients that check health by watching (grpc-go's
// client-side health checking does) would otherwise hold a stream open and
// make every graceful shutdown wait out the whole grace period.
type healthService struct {
	*health.Server
	quit <-chan struct{} // closed shortly after statuses turn NOT_SERVING
}

func (h healthService) Watch(req *healthgrpc.HealthCheckRequest, stream healthgrpc.Health_WatchServer) error {
	ctx, cancel := context.WithCancel(stream.Context())
	defer cancel()
	go func() {
		select {
		case <-h.quit:
			cancel()
		case <-ctx.Done():
		}
	}()
	return h.Server.Watch(req, watchStream{stream, ctx})
}

// watchStream is a Watch stream with a context that shutdown can end.
type watchStream struct {
	healthgrpc.Health_WatchServer
	ctx context.Context
}

func (w watchStream) Context() context.Context { return w.ctx }
