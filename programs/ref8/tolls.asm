; tolls.asm — the toll for one cart on the Gullhaven causeway.
;
; The toll keeper keys in the cart's axle load (in quarter tonnes) and the
; toll per quarter tonne (in pence); the program multiplies them (16-bit
; multiply, low 16 bits kept) into `toll`, shows its low byte on the lamps,
; stops at a pause, and prints the toll in pence. Made for `relaybench
; sweep`, which sets `load` and `rate` to many pairs of values and checks
; `toll` against Python's own product:
;
;   relaybench sweep programs/ref8/tolls.asm --each load=0..255 --each rate=0..255 \
;       --collect toll:2 --check "toll == load * rate" --out tolls.csv
;
; Expected values: computed in Python, 23 * 45 = 1035 = 0x040B.

LAMPS = 1

        ld r0, [load]
        li r1, 0
        ld r2, [rate]
        li r3, 0
        call mul16
        st [toll], r0
        st [toll + 1], r1
        out LAMPS, r0
        pause                   ; the toll is in memory and on the lamps
        .expect [toll] == lo(1035), [toll + 1] == hi(1035), lamps == lo(1035)
        li x, text_toll
        call print_str
        ld r0, [toll]
        ld r1, [toll + 1]
        call print_u16
        li x, text_pence
        call print_str
        halt
        .expect out == "toll 1035p\n"

load:   .byte 23
rate:   .byte 45
toll:   .word 0
text_toll:   .byte "toll ", 0
text_pence:  .byte "p\n", 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
