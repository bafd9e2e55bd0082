#include "textflag.h"

// func hasPOPCNT() bool
TEXT ·hasPOPCNT(SB), NOSPLIT, $0-1
	MOVL $1, AX
	XORL CX, CX
	CPUID
	SHRL $23, CX
	ANDL $1, CX
	MOVB CX, ret+0(FP)
	RET

// func popDot2x2Asm(u0, u1, v0, v1 *uint64, n int) (n00, n01, n10, n11 int64)
//
// For each word pair w (a = word 2w, b = word 2w+1) and each sire x in
// {u0, u1} and dam p in {v0, v1}:
//   acc(x,p) += popcnt(xa&pa) + popcnt((xa&pb)|(xb&pa)) + 2*popcnt(xb&pb)
// Registers: SI u0, DI u1, R8 v0, R9 v1 (moved to the end of their data),
// CX negative byte offset, R10-R13 accumulators, AX BX DX BP sire words,
// R14 R15 scratch.
TEXT ·popDot2x2Asm(SB), NOSPLIT, $8-72
	MOVQ BP, 0(SP)
	MOVQ u0+0(FP), SI
	MOVQ u1+8(FP), DI
	MOVQ v0+16(FP), R8
	MOVQ v1+24(FP), R9
	MOVQ n+32(FP), CX
	SHLQ $4, CX
	ADDQ CX, SI
	ADDQ CX, DI
	ADDQ CX, R8
	ADDQ CX, R9
	NEGQ CX
	XORQ R10, R10
	XORQ R11, R11
	XORQ R12, R12
	XORQ R13, R13

loop:
	MOVQ 0(SI)(CX*1), AX  // xa
	MOVQ 8(SI)(CX*1), BX  // xb
	MOVQ 0(DI)(CX*1), DX  // ya
	MOVQ 8(DI)(CX*1), BP  // yb

	// (u0, v0) -> R10
	MOVQ AX, R14
	ANDQ 0(R8)(CX*1), R14
	POPCNTQ R14, R14
	ADDQ R14, R10
	MOVQ AX, R14
	ANDQ 8(R8)(CX*1), R14
	MOVQ BX, R15
	ANDQ 0(R8)(CX*1), R15
	ORQ R15, R14
	POPCNTQ R14, R14
	ADDQ R14, R10
	MOVQ BX, R14
	ANDQ 8(R8)(CX*1), R14
	POPCNTQ R14, R14
	ADDQ R14, R10
	ADDQ R14, R10

	// (u0, v1) -> R11
	MOVQ AX, R14
	ANDQ 0(R9)(CX*1), R14
	POPCNTQ R14, R14
	ADDQ R14, R11
	MOVQ AX, R14
	ANDQ 8(R9)(CX*1), R14
	MOVQ BX, R15
	ANDQ 0(R9)(CX*1), R15
	ORQ R15, R14
	POPCNTQ R14, R14
	ADDQ R14, R11
	MOVQ BX, R14
	ANDQ 8(R9)(CX*1), R14
	POPCNTQ R14, R14
	ADDQ R14, R11
	ADDQ R14, R11

	// (u1, v0) -> R12
	MOVQ DX, R14
	ANDQ 0(R8)(CX*1), R14
	POPCNTQ R14, R14
	ADDQ R14, R12
	MOVQ DX, R14
	ANDQ 8(R8)(CX*1), R14
	MOVQ BP, R15
	ANDQ 0(R8)(CX*1), R15
	ORQ R15, R14
	POPCNTQ R14, R14
	ADDQ R14, R12
	MOVQ BP, R14
	ANDQ 8(R8)(CX*1), R14
	POPCNTQ R14, R14
	ADDQ R14, R12
	ADDQ R14, R12

	// (u1, v1) -> R13
	MOVQ DX, R14
	ANDQ 0(R9)(CX*1), R14
	POPCNTQ R14, R14
	ADDQ R14, R13
	MOVQ DX, R14
	ANDQ 8(R9)(CX*1), R14
	MOVQ BP, R15
	ANDQ 0(R9)(CX*1), R15
	ORQ R15, R14
	POPCNTQ R14, R14
	ADDQ R14, R13
	MOVQ BP, R14
	ANDQ 8(R9)(CX*1), R14
	POPCNTQ R14, R14
	ADDQ R14, R13
	ADDQ R14, R13

	ADDQ $16, CX
	JNZ loop

	MOVQ 0(SP), BP
	MOVQ R10, n00+40(FP)
	MOVQ R11, n01+48(FP)
	MOVQ R12, n10+56(FP)
	MOVQ R13, n11+64(FP)
	RET
