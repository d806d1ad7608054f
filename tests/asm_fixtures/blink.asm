; a small ref8 demo of our own: count the lamps up from START to STOP
        .include "consts.inc"
start:  li r0, START
        li sp, stack_top
again:  out LAMPS, r0
        call bump
        cmp r0, STOP
        jnz again
        pause
        .expect r0 == STOP, lamps == STOP - 1
        .expect z == 1
        halt
bump:   inc r0
        ret
        .zero 8
stack_top:
