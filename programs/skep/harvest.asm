        .machine "skep"
; harvest.asm — the honey harvest at Hollin Bank apiary.
;
; The beekeeper weighs the honey taken from each of the ten hives (whole
; kilograms; hive 4 was queenless and gave none). The program prints each
; hive's weight, then pauses with the total in a: the beekeeper compares it
; with the tally book before pressing RESUME. Then it names the heaviest
; hive and shares the total out over the hives that gave honey.
;
; Check values (computed in Python from the table below, recomputed by
; tests/test_programs_skep.py): total 23+41+17+0+35+28+52+9+31+44 = 280;
; heaviest hive 7 with 52 kg; 9 hives gave honey; 280 = 9 × 31 + 1.

HIVES = 10

start:  ldi a, 0
        st [total], a
        st [best], a
        st [best_hive], a
        st [givers], a
        ldi a, 1
        st [hive], a
        ldi a, weights
        st [next], a

each:   ldi x, s_hive           ; "HIVE 7: 52 KG"
        call puts
        ld a, [hive]
        call putdec
        ldi x, s_colon
        call puts
        ld x, [next]
        ld a, [x]
        st [weight], a
        call putdec
        ldi x, s_kg
        call puts

        ld a, [total]           ; 6 cycles: the ALU reads the word itself
        add [weight]
        st [total], a
        ld a, [weight]
        or #0
        jz no_honey
        ld a, [givers]
        add #1
        st [givers], a
no_honey:
        ld a, [best]
        cmp [weight]
        jnc not_best            ; no borrow: best ≥ weight, an earlier hive keeps it
        ld a, [weight]
        st [best], a
        ld a, [hive]
        st [best_hive], a
not_best:
        ld a, [next]
        add #1
        st [next], a
        ld a, [hive]
        add #1
        st [hive], a
        cmp #HIVES + 1
        jnz each

        ld a, [givers]
        out 1, a                ; the lamps show how many hives gave honey
        ld a, [total]
        pause                   ; the beekeeper checks the total against the tally book
        .expect a == 280, [best_hive] == 7, [best] == 52, lamps == 9

        ldi x, s_total          ; "TOTAL 280 KG"
        call puts
        ld a, [total]
        call putdec
        ldi x, s_kg
        call puts
        ldi x, s_heaviest       ; "HEAVIEST HIVE 7: 52 KG"
        call puts
        ld a, [best_hive]
        call putdec
        ldi x, s_colon
        call puts
        ld a, [best]
        call putdec
        ldi x, s_kg
        call puts

        ld b, [givers]          ; total ÷ givers by repeated subtraction
        ldi x, 0
        ld a, [total]
share:  cmp b
        jc shared               ; a < b: a is the remainder, x the quotient
        sub b
        inx
        jmp share
shared: st [left], a
        st [each_kg], x
        ld a, [givers]          ; "9 HIVES GAVE 31 KG EACH, 1 KG OVER"
        call putdec
        ldi x, s_gave
        call puts
        ld a, [each_kg]
        call putdec
        ldi x, s_each
        call puts
        ld a, [left]
        call putdec
        ldi x, s_over
        call puts
        ld x, [each_kg]
        ld a, [left]
        stop
        .expect x == 31, a == 1, lamps == 9
        .expect out == "HIVE 1: 23 KG\nHIVE 2: 41 KG\nHIVE 3: 17 KG\nHIVE 4: 0 KG\nHIVE 5: 35 KG\nHIVE 6: 28 KG\nHIVE 7: 52 KG\nHIVE 8: 9 KG\nHIVE 9: 31 KG\nHIVE 10: 44 KG\nTOTAL 280 KG\nHEAVIEST HIVE 7: 52 KG\n9 HIVES GAVE 31 KG EACH, 1 KG OVER\n"

weights:
        .byte 23, 41, 17, 0, 35, 28, 52, 9, 31, 44
total:  .byte 0
best:   .byte 0
best_hive:
        .byte 0
givers: .byte 0
hive:   .byte 0
next:   .byte 0
weight: .byte 0
left:   .byte 0
each_kg:
        .byte 0

s_hive: .byte "HIVE ", 0
s_colon:
        .byte ": ", 0
s_kg:   .byte " KG\n", 0
s_total:
        .byte "TOTAL ", 0
s_heaviest:
        .byte "HEAVIEST HIVE ", 0
s_gave: .byte " HIVES GAVE ", 0
s_each: .byte " KG EACH, ", 0
s_over: .byte " KG OVER\n", 0

        .include "lib/print.inc"
