        .machine "../machines/nib2.toml"
; reads two digits (waiting for each), adds them, shows the sum on the
; lamps; counts b up until a reaches 0 by skips
        get a
        mov b, a
        get a
        add b
        out a
        sta [sum]
        pause
        .expect a == 7, lamps == 7, [sum] == 7
        ldi b, 0
again:  inc b
        dec a
        skz             ; skips the whole three-word jmp when a reached 0
        jmp again
        swap
        out b
        pause
        .expect a == 7, b == 0, lamps == 0, z == 1
        ldi b, 4        ; 'A' is 0x41: b the high word, a the low one
        ldi a, 1
        put
        halt
        .expect out == "A", lamps == 0
sum:    .byte 0
