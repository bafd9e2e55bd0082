//go:build !amd64

package mating

var popDot2x2 = popDot2x2Go
