// Package api is the gRPC annotation service.
package api
