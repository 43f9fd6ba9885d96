// OpenQASM 3.0 with control modifiers, including negative controls.
OPENQASM 3.0;
include "stdgates.inc";
qubit[4] q;
ctrl(3) @ x q[0], q[1], q[2], q[3];
negctrl @ ctrl @ x q[1], q[3], q[0];
negctrl(2) @ x q[2], q[0], q[1];
ccx q[0], q[1], q[2];
cswap q[3], q[0], q[1];
