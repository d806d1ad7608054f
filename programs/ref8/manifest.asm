; manifest.asm — the freight manifest of the Thursday cargo run.
;
; Twelve consignments are waiting on the pier, weighed in kilograms (16-bit
; values). The deck hands load the lightest first, so the program sorts the
; weights in place (bubble sort over 16-bit words through the pointer x),
; prints them in loading order and adds up the deck load.
;
; Expected values: computed in Python,
;   sorted([1250, 380, 4075, 96, 2210, 15, 760, 3300, 1250, 540, 12005, 875])
;   -> 15 96 380 540 760 875 1250 1250 2210 3300 4075 12005, sum 26756;
;   the memory checks are lo()/hi() of the first, seventh and last weight.

COUNT = 12

sort:
        li r5, 0                ; set when a pass swapped something
        li x, weights
        li r4, COUNT - 1        ; neighbouring pairs per pass
sort_pair:
        ld r0, [x]              ; A <- the first weight of the pair
        inc x
        ld r1, [x]
        inc x
        ld r2, [x]              ; B <- the second
        inc x
        ld r3, [x]
        push r2
        push r3
        sub r2, r0              ; B - A borrows when A > B
        sbc r3, r1
        pop r3                  ; pop leaves the flags alone
        pop r2
        jnc sort_keep
        st [x], r1              ; swap: x is at the last byte of the pair
        dec x
        st [x], r0
        dec x
        st [x], r3
        dec x
        st [x], r2
        inc x
        inc x
        li r5, 1
        jmp sort_next
sort_keep:
        dec x                   ; x back to the second weight of the pair
sort_next:
        dec r4
        jnz sort_pair
        cmp r5, 0
        jnz sort
        pause
        .expect [weights] == 15, [weights + 1] == 0
        .expect [weights + 12] == lo(1250), [weights + 13] == hi(1250)
        .expect [weights + 22] == lo(12005), [weights + 23] == hi(12005)

        li x, weights           ; print in loading order and total them
        li r4, COUNT
        st [left], r4
print_next:
        ld r0, [x]
        inc x
        ld r1, [x]
        inc x
        ld r2, [total]
        ld r3, [total + 1]
        add r2, r0
        adc r3, r1
        st [total], r2
        st [total + 1], r3
        call print_u16          ; keeps x
        li r0, ' '
        out CONSOLE, r0
        ld r4, [left]
        dec r4
        st [left], r4
        jnz print_next
        call newline
        li x, text_total
        call print_str
        ld r0, [total]
        ld r1, [total + 1]
        call print_u16
        li x, text_kg
        call print_str
        halt
        .expect out == "15 96 380 540 760 875 1250 1250 2210 3300 4075 12005 \ndeck load 26756 kg\n"
        .expect [total] == lo(26756), [total + 1] == hi(26756), sp == 0

weights:
        .word 1250, 380, 4075, 96, 2210, 15, 760, 3300, 1250, 540, 12005, 875
total:  .word 0
left:   .byte 0
text_total: .byte "deck load ", 0
text_kg:    .byte " kg\n", 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
