        .machine "../machines/brace8.toml"
; sum the bytes of a zero-terminated table through pointer ef, print the
; total as one letter, call a routine that doubles it
        lsp 0xFF00
        ldi e, hi(table)
        ldi f, lo(table)
        ldi a, 0
        ldi c, 0            ; c stays 0: the terminator test
loop:   ld b, [ef]
        mov d, a            ; keep the sum
        mov a, b
        cmp c
        goto z, done
        mov a, d
        add b
        incp ef
        goto always, loop
done:   mov a, d
        pause
        .expect a == 15, ef == table + 5
        call double
        out a
        ldi b, 'A'
        add b
        put a
        halt
        .expect a == 95, lamps == 30, out == "_", sp == 0xFF00
double: mov b, a
        add b
        ret
table:  .byte 1, 2, 3, 4, 5, 0
