//go:build !amd64

package store

var haveAVX2 = false

func prefixSums8(sums []uint32, fixed []byte, run uint32) (last uint32, most uint32) {
	return prefixSums8Go(sums, fixed, run)
}

func offsets16(out []uint16, b []byte, first int32, off int32) (chunks int, last int32, lowest int32, highest int32) {
	return offsets16Go(out, b, first, off)
}
