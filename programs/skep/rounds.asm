        .machine "skep"
; rounds.asm — when do the apiary's rounds fall on the same day?
;
; At Hollin Bank the hives are inspected every 9 days, fed every 12, checked
; for mites every 14 and the water troughs refilled every 7. Taking the
; rounds one by one, the program prints after each how often every round so
; far falls on one day: the least common multiple, worked out as
; every ÷ gcd(every, days) × days, with Euclid's gcd by subtraction, the
; division by repeated subtraction and the product by repeated addition
; counted down by `loop`.
;
; Check values: lcm(9) = 9, lcm(9, 12) = 36, lcm(36, 14) = 252,
; lcm(252, 7) = 252 (the last gcd is 7), computed in Python with math.gcd
; and math.lcm and recomputed by tests/test_programs_skep.py.

NEWLINE = 10

start:  ldi a, 1
        st [every], a
        ldi a, rounds
        st [next], a

round:  ld x, [next]
        ld a, [x]               ; the round's name, or 0 after the last
        or #0
        jz finished
        mov x, a
        call puts               ; "FEED 12 -> 36"
        ld x, [next]
        inx
        ld a, [x]
        st [days], a
        ldi a, ' '
        out 0, a
        ld a, [days]
        call putdec
        ldi x, s_arrow
        call puts

        ld a, [every]
        ld b, [days]
        call gcd
        st [common], a
        mov b, a                ; every ÷ gcd: x counts how often it goes
        ld a, [every]
        ldi x, 0
divide: cmp b
        jc divided
        sub b
        inx
        jmp divide
divided:
        ldi a, 0                ; × days: x ≥ 1 additions, counted down
times:  add [days]
        loop times
        st [every], a
        call putdec
        ldi a, NEWLINE
        out 0, a
        ld a, [next]
        add #2
        st [next], a
        jmp round

finished:
        ldi x, s_all            ; "ALL MEET EVERY 252 DAYS"
        call puts
        ld a, [every]
        call putdec
        ldi x, s_days
        call puts
        ld a, [every]
        out 1, a
        ld b, [common]
        stop
        .expect a == 252, b == 7, lamps == 252, [every] == 252
        .expect out == "INSPECT 9 -> 9\nFEED 12 -> 36\nMITES 14 -> 252\nWATER 7 -> 252\nALL MEET EVERY 252 DAYS\n"

; gcd: a ← gcd(a, b) for a, b ≥ 1, by taking the smaller from the larger
; until they agree. Uses b; returns through lr.
gcd:    cmp b
        jz gcd_end
        jc b_larger             ; a < b
        sub b
        jmp gcd
b_larger:
        st [gcd_a], a           ; b ← b − a
        mov a, b
        sub [gcd_a]
        mov b, a
        ld a, [gcd_a]
        jmp gcd
gcd_end:
        ret

rounds: .byte s_inspect, 9, s_feed, 12, s_mites, 14, s_water, 7, 0
every:  .byte 0
next:   .byte 0
days:   .byte 0
common: .byte 0
gcd_a:  .byte 0

s_inspect:
        .byte "INSPECT", 0
s_feed: .byte "FEED", 0
s_mites:
        .byte "MITES", 0
s_water:
        .byte "WATER", 0
s_arrow:
        .byte " -> ", 0
s_all:  .byte "ALL MEET EVERY ", 0
s_days: .byte " DAYS\n", 0

        .include "lib/print.inc"
