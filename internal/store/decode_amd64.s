#include "textflag.h"

// RUNNING_SUM turns the eight changes in Y0 into sums running on from
// the total in Y15 (all lanes); Y1 is scratch.
#define RUNNING_SUM \
	VPSLLDQ    $4, Y0, Y1 \
	VPADDD     Y1, Y0, Y0 \
	VPSLLDQ    $8, Y0, Y1 \
	VPADDD     Y1, Y0, Y0 \
	VPSHUFD    $0xFF, Y0, Y1 \
	VPERM2I128 $0x08, Y1, Y1, Y1 \
	VPADDD     Y1, Y0, Y0 \
	VPADDD     Y15, Y0, Y0

// The curve's columns decoded eight points an instruction (decode.go has
// the same in Go, the reference the tests hold these to). Both keep a
// running sum across eight 32-bit lanes: each lane adds the lanes below
// it in its half (two shifted adds), the upper half adds the lower
// half's total, and the last lane carries on to the next eight.

// func prefixSums8AVX2(sums []uint32, fixed []byte, run uint32) (last uint32, most uint32)
// len(sums) a multiple of 8, len(fixed) ≥ 2·len(sums): the two-byte
// changes in fixed summed on from run into sums; the last sum and the
// largest change.
TEXT ·prefixSums8AVX2(SB), NOSPLIT, $0-64
	MOVQ sums_base+0(FP), DI
	MOVQ sums_len+8(FP), CX
	MOVQ fixed_base+24(FP), SI
	MOVL run+48(FP), AX
	VMOVD AX, X15
	VPBROADCASTD X15, Y15  // the running sum
	MOVL $7, AX
	VMOVD AX, X8
	VPBROADCASTD X8, Y8    // lane 7, for VPERMD
	VPXOR Y12, Y12, Y12    // the largest change
	SHRQ $3, CX

sumsLoop:
	TESTQ CX, CX
	JZ    sumsDone
	VPMOVZXWD (SI), Y0
	VPMAXUD   Y0, Y12, Y12
	RUNNING_SUM
	VMOVDQU   Y0, (DI)
	VPERMD    Y0, Y8, Y15
	ADDQ      $16, SI
	ADDQ      $32, DI
	DECQ      CX
	JMP       sumsLoop

sumsDone:
	VMOVD X15, AX
	MOVL  AX, last+56(FP)
	VEXTRACTI128 $1, Y12, X1
	VPMAXUD X1, X12, X12
	VPSHUFD $0x4E, X12, X1
	VPMAXUD X1, X12, X12
	VPSHUFD $0xB1, X12, X1
	VPMAXUD X1, X12, X12
	VMOVD X12, AX
	MOVL  AX, most+60(FP)
	VZEROUPPER
	RET

// func offsets16AVX2(out []uint16, b []byte, first int32, off int32) (chunks int, last int32, lowest int32, highest int32)
// Reads eight one-byte offset changes (zigzag) at a time from b into
// out, summed on from off, while all eight are one byte (below 0x80) and
// len(out)/8 rounds last; the durations are first, first+1, …. Returns
// the rounds read, the last offset, the lowest offset and the highest
// offset + duration (a window's end).
TEXT ·offsets16AVX2(SB), NOSPLIT, $0-76
	MOVQ out_base+0(FP), DI
	MOVQ out_len+8(FP), CX
	MOVQ b_base+24(FP), SI
	SHRQ $3, CX
	XORQ BX, BX
	MOVL off+52(FP), AX
	VMOVD AX, X15
	VPBROADCASTD X15, Y15  // the running offset
	MOVL first+48(FP), AX
	VMOVD AX, X14
	VPBROADCASTD X14, Y14
	MOVQ $0x0000000300000002, AX // lanes' durations: first + 0 … 7
	MOVQ AX, X1
	MOVQ $0x0000000100000000, AX
	MOVQ AX, X0
	VPUNPCKLQDQ X1, X0, X0       // 0 1 2 3
	MOVL $4, AX
	VMOVD AX, X2
	VPBROADCASTD X2, X2
	VPADDD X2, X0, X1            // 4 5 6 7
	VINSERTI128 $1, X1, Y0, Y0
	VPADDD Y0, Y14, Y14
	MOVL $8, AX
	VMOVD AX, X13
	VPBROADCASTD X13, Y13  // 8
	MOVL $1, AX
	VMOVD AX, X10
	VPBROADCASTD X10, Y10  // 1
	MOVL $7, AX
	VMOVD AX, X8
	VPBROADCASTD X8, Y8    // lane 7, for VPERMD
	VPXOR Y9, Y9, Y9       // 0
	MOVL $0x7fffffff, AX
	VMOVD AX, X12
	VPBROADCASTD X12, Y12  // the lowest offset
	MOVL $0x80000000, AX
	VMOVD AX, X11
	VPBROADCASTD X11, Y11  // the highest end
	MOVQ $0x8080808080808080, DX

offLoop:
	CMPQ BX, CX
	JAE  offDone
	MOVQ (SI)(BX*8), AX
	TESTQ DX, AX
	JNZ  offDone
	VPMOVZXBD (SI)(BX*8), Y0
	VPSRLD  $1, Y0, Y1
	VPAND   Y10, Y0, Y2
	VPSUBD  Y2, Y9, Y2
	VPXOR   Y2, Y1, Y0
	RUNNING_SUM
	VPMINSD Y0, Y12, Y12
	VPADDD  Y14, Y0, Y1
	VPMAXSD Y1, Y11, Y11
	VPADDD  Y13, Y14, Y14
	VPERMD  Y0, Y8, Y15
	VEXTRACTI128 $1, Y0, X1
	VPACKUSDW X1, X0, X0
	MOVQ    BX, R8
	SHLQ    $4, R8
	VMOVDQU X0, (DI)(R8*1)
	INCQ    BX
	JMP     offLoop

offDone:
	MOVQ BX, chunks+56(FP)
	VMOVD X15, AX
	MOVL AX, last+64(FP)
	VEXTRACTI128 $1, Y12, X1
	VPMINSD X1, X12, X12
	VPSHUFD $0x4E, X12, X1
	VPMINSD X1, X12, X12
	VPSHUFD $0xB1, X12, X1
	VPMINSD X1, X12, X12
	VMOVD X12, AX
	MOVL AX, lowest+68(FP)
	VEXTRACTI128 $1, Y11, X1
	VPMAXSD X1, X11, X11
	VPSHUFD $0x4E, X11, X1
	VPMAXSD X1, X11, X11
	VPSHUFD $0xB1, X11, X1
	VPMAXSD X1, X11, X11
	VMOVD X11, AX
	MOVL AX, highest+72(FP)
	VZEROUPPER
	RET
