// A hand-written circuit in the supported gate set (OpenQASM 2.0).
OPENQASM 2.0;
include "qelib1.inc";
qreg q[4];
x q[0];
cx q[0],q[2];
ccx q[1],q[2],q[3];
swap q[0],q[3];
cswap q[1],q[2],q[0];
cx q[3],q[1];
