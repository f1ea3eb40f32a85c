#include "textflag.h"

// func windowsMax32AVX2(hi, lo []uint32) uint32
// The highest of hi[s] − lo[s] (32-bit, wrapping) over s < len(hi);
// len(lo) ≥ len(hi). Sixteen starts a round in two registers, then the
// rest one at a time. 0 is the identity: the differences are window
// sums, never below it.
TEXT ·windowsMax32AVX2(SB), NOSPLIT, $0-52
	MOVQ hi_base+0(FP), SI
	MOVQ hi_len+8(FP), CX
	MOVQ lo_base+24(FP), DI
	VPXOR Y0, Y0, Y0
	VPXOR Y1, Y1, Y1

wide:
	CMPQ CX, $16
	JB   narrow
	VMOVDQU (SI), Y2
	VMOVDQU 32(SI), Y3
	VPSUBD  (DI), Y2, Y2
	VPSUBD  32(DI), Y3, Y3
	VPMAXUD Y2, Y0, Y0
	VPMAXUD Y3, Y1, Y1
	ADDQ    $64, SI
	ADDQ    $64, DI
	SUBQ    $16, CX
	JMP     wide

narrow:
	// fold the sixteen lanes into one
	VPMAXUD     Y1, Y0, Y0
	VEXTRACTI128 $1, Y0, X1
	VPMAXUD     X1, X0, X0
	VPSHUFD     $0x4E, X0, X1
	VPMAXUD     X1, X0, X0
	VPSHUFD     $0xB1, X0, X1
	VPMAXUD     X1, X0, X0
	VMOVD       X0, AX
	VZEROUPPER

one:
	TESTQ CX, CX
	JZ    done
	MOVL  (SI), DX
	SUBL  (DI), DX
	CMPL  DX, AX
	CMOVLHI DX, AX
	ADDQ  $4, SI
	ADDQ  $4, DI
	DECQ  CX
	JMP   one

done:
	MOVL AX, ret+48(FP)
	RET

// func firstWith32AVX2(hi, lo []uint32, v uint32) int
// The first s < len(hi) with hi[s] − lo[s] = v, or len(hi); len(lo) ≥
// len(hi). Eight starts a round, then the rest one at a time.
TEXT ·firstWith32AVX2(SB), NOSPLIT, $0-64
	MOVQ hi_base+0(FP), SI
	MOVQ hi_len+8(FP), CX
	MOVQ lo_base+24(FP), DI
	MOVL v+48(FP), R8
	VMOVD R8, X4
	VPBROADCASTD X4, Y4
	XORQ BX, BX // s

wide:
	LEAQ 8(BX), DX
	CMPQ DX, CX
	JA   narrow
	VMOVDQU  (SI)(BX*4), Y2
	VPSUBD   (DI)(BX*4), Y2, Y2
	VPCMPEQD Y4, Y2, Y2
	VMOVMSKPS Y2, AX
	TESTL    AX, AX
	JNZ      found
	MOVQ     DX, BX
	JMP      wide

found:
	VZEROUPPER
	BSFL AX, AX
	ADDQ AX, BX
	MOVQ BX, ret+56(FP)
	RET

narrow:
	VZEROUPPER

one:
	CMPQ BX, CX
	JAE  done
	MOVL (SI)(BX*4), DX
	SUBL (DI)(BX*4), DX
	CMPL DX, R8
	JEQ  hit
	INCQ BX
	JMP  one

hit:
	MOVQ BX, ret+56(FP)
	RET

done:
	MOVQ CX, ret+56(FP)
	RET
