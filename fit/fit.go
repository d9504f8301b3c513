// Package fit is the collapsed Gibbs fitter: concept topics with label priors plus free topics.
package fit
