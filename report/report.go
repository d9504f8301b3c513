// Package report builds gap reports and scores annotations against human indexing.
package report
