; fares.asm — the day's takings at Gullhaven ferry pier.
;
; Five crossings ran today. For each one the ticket clerk keyed in how many
; adults, children and bicycles went aboard; this program prices each
; crossing (16-bit multiply), keeps the running total, prints every figure
; in decimal, and splits the takings between the seven crew (16-bit divide).
;
; Expected values: computed in Python from the table below,
;   takings = 185 * adults + 95 * children + 60 * bicycles
;   -> 5350, 9145, 4090, 12845, 8530; total 39960; 39960 // 5 = 7992;
;   divmod(39960, 7) = (5708, 4). tests/test_programs.py recomputes them.

ADULT   = 185               ; fares in pence
CHILD   = 95
BICYCLE = 60
CREW    = 7
LAMPS   = 1

        li x, crossings
        li r5, 1            ; crossing number, shown on the lamps
        call crossing
        pause
        .expect [total] == lo(5350), [total + 1] == hi(5350), lamps == 1
        call crossing
        pause
        .expect [total] == lo(14495), [total + 1] == hi(14495), lamps == 2
        call crossing
        call crossing
        call crossing
        pause
        .expect [total] == lo(39960), [total + 1] == hi(39960), lamps == 5, sp == 0

        li x, text_total
        call print_str
        call load_total
        call print_u16
        call pence

        li x, text_average  ; the mean takings of a crossing
        call print_str
        call load_total
        li r2, 5
        li r3, 0
        call div16
        call print_u16
        call pence

        li r0, CREW         ; the crew's shares and what is left over
        li r1, 0
        call print_u16
        li r0, ' '
        out CONSOLE, r0
        li x, text_crew
        call print_str
        call load_total
        li r2, CREW
        li r3, 0
        call div16
        push r4             ; the remainder, for after the share is printed
        call print_u16
        li x, text_each
        call print_str
        pop r0
        li r1, 0
        call print_u16
        li x, text_left
        call print_str
        halt
        .expect out == "crossing 1: 5350p\ncrossing 2: 9145p\ncrossing 3: 4090p\ncrossing 4: 12845p\ncrossing 5: 8530p\ntotal 39960p\nper crossing 7992p\n7 crew: 5708p each, 4p to the lifeboat box\n"
        .expect r0 == 0, sp == 0

; crossing: price the crossing whose three counts are at x, add it to the
; total and print it. x moves past the counts; [number] counts crossings.
crossing:
        ld r5, [number]
        inc r5
        st [number], r5
        out LAMPS, r5
        li r0, 0
        st [takings], r0
        st [takings + 1], r0
        li r2, lo(ADULT)
        li r3, hi(ADULT)
        call price_one
        li r2, lo(CHILD)
        li r3, hi(CHILD)
        call price_one
        li r2, lo(BICYCLE)
        li r3, hi(BICYCLE)
        call price_one
        ld r0, [takings]
        ld r1, [takings + 1]
        ld r2, [total]
        ld r3, [total + 1]
        add r2, r0
        adc r3, r1
        st [total], r2
        st [total + 1], r3

        push r6             ; keep x, which points at the next crossing
        push r7
        li x, text_crossing
        call print_str
        ld r0, [number]
        li r1, 0
        call print_u16
        li x, text_colon
        call print_str
        ld r0, [takings]
        ld r1, [takings + 1]
        call print_u16
        call pence
        pop r7
        pop r6
        ret

; price_one: takings += [x] * B; x moves to the next count.
price_one:
        ld r0, [x]
        li r1, 0
        inc x
        call mul16
        ld r2, [takings]
        ld r3, [takings + 1]
        add r2, r0
        adc r3, r1
        st [takings], r2
        st [takings + 1], r3
        ret

load_total:
        ld r0, [total]
        ld r1, [total + 1]
        ret

pence:                      ; "p" and the end of the line
        li r0, 'p'
        out CONSOLE, r0
        jmp newline

crossings:                  ; adults, children, bicycles
        .byte 23, 9, 4
        .byte 41, 12, 7
        .byte 17, 3, 11
        .byte 58, 21, 2
        .byte 36, 14, 9
number:   .byte 0
takings:  .word 0
total:    .word 0

text_crossing: .byte "crossing ", 0
text_colon:    .byte ": ", 0
text_total:    .byte "total ", 0
text_average:  .byte "per crossing ", 0
text_crew:     .byte "crew: ", 0
text_each:     .byte "p each, ", 0
text_left:     .byte "p to the lifeboat box\n", 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
