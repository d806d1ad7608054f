        .machine "skep"
; tags.asm — checking the hive tags at Hollin Bank apiary.
;
; Every hive carries a numbered tag whose last digit is a Luhn check digit,
; so a misread tag is caught before it goes into the register. The numbers
; come in on the input stream, one a line, and an empty line ends the round
; (tags.panel.toml holds the day's six). The program waits for each word
; with `get`, so however slowly the tags are keyed in, it reads the same. For each the program echoes the number and says GOOD, or BAD and
; the check digit the number wants; the lamps show how many were bad.
;
; Luhn: from the rightmost digit before the check digit, double every
; other digit (a doubled digit above 9 loses 9), add all; the check digit
; brings the sum up to a multiple of 10. The first tag, 79927398713, is the
; algorithm's usual worked example (check digit 3). Check values computed
; in Python and recomputed by tests/test_programs_skep.py.

NEWLINE = 10

start:  ldi a, 0
        st [tags], a
        st [bad], a

line:   get a                   ; a tag's first digit, or the empty line that ends the round
        cmp #NEWLINE
        jz done
        ldi x, digits           ; x: where the next digit goes
        jmp echo
read:   get a                   ; waits for the word, then takes it
        cmp #NEWLINE
        jz got
echo:   out 0, a                ; echo the digit
        sub #'0'
        st [x], a
        inx
        jmp read
got:    st [last], x            ; one past the check digit
        ldi a, 0
        st [sum], a
        ldi a, 1
        st [double], a          ; the digit before the check digit is doubled
        mov a, x
        sub #2
        st [at], a

digit:  ld x, [at]
        ld a, [x]
        st [value], a
        ld a, [double]
        or #0
        jz add_it
        ld a, [value]
        add [value]
        cmp #10
        jc doubled              ; below 10: keep it
        sub #9
doubled:
        st [value], a
add_it: ld a, [sum]             ; the sum is kept below 10 as it goes
        add [value]
        cmp #10
        jc summed_one
        sub #10
summed_one:
        st [sum], a
        ld a, [double]
        xor #1
        st [double], a
        ld a, [at]
        cmp #digits
        jz summed               ; that was the first digit
        sub #1
        st [at], a
        jmp digit

summed: ldi a, 10               ; wanted = (10 - sum) mod 10
        sub [sum]
        cmp #10
        jnz wanted_known
        ldi a, 0
wanted_known:
        st [wanted], a
        ld a, [tags]
        add #1
        st [tags], a
        ld a, [last]
        sub #1
        mov x, a
        ld a, [x]               ; the check digit the tag carries
        cmp [wanted]
        jnz wrong
        ldi x, s_good
        call puts
        jmp line
wrong:  ld a, [bad]
        add #1
        st [bad], a
        out 1, a
        ldi x, s_bad
        call puts
        ld a, [wanted]
        call putdec
        ldi a, NEWLINE
        out 0, a
        jmp line

done:   ld a, [tags]            ; "6 TAGS, 2 BAD"
        call putdec
        ldi x, s_tags
        call puts
        ld a, [bad]
        call putdec
        ldi x, s_bad_total
        call puts
        ld a, [bad]
        ld b, [tags]
        stop
        .expect a == 2, b == 6, lamps == 2
        .expect out == "79927398713 GOOD\n41170523 GOOD\n20319961 BAD, WANTS 8\n504480 GOOD\n8801726345 BAD, WANTS 3\n31415920 GOOD\n6 TAGS, 2 BAD\n"

tags:   .byte 0
bad:    .byte 0
last:   .byte 0
at:     .byte 0
sum:    .byte 0
double: .byte 0
value:  .byte 0
wanted: .byte 0
digits: .zero 24                ; the digits of one tag, as numbers 0…9

s_good: .byte " GOOD\n", 0
s_bad:  .byte " BAD, WANTS ", 0
s_tags: .byte " TAGS, ", 0
s_bad_total:
        .byte " BAD\n", 0

        .include "lib/print.inc"
