; tickets.asm — the ticket window, driven by the panel and the input stream.
;
; The clerk sets the destination on panel switches 0-1 (0 Skerry Isle,
; 1 Holm, 2 Far Ness, 3 the lighthouse) and switch 7 for a return ticket
; (twice the single fare, less 50p). The group sizes arrive on the input
; stream as decimal text, separated by commas or line ends. Each group is
; priced (16-bit multiply), the lamps count the groups, and a receipt is
; printed. tickets.panel.toml sets the panel for `relaybench test`:
; switches 0x82 (return to Far Ness), input "12,7,30\n"; by hand:
;   relaybench run programs/ref8/tickets.asm --switches 0x82 --input-text '12,7,30\n'
;
; Expected values: computed in Python,
;   fare = 455 * 2 - 50 = 860; groups [12, 7, 30] -> 10320, 6020, 25800;
;   total 42140, 49 passengers, 3 groups (lamps == 3).

SWITCHES    = 0
INPUT       = 1
INPUT_READY = 2
LAMPS       = 1
RETURN      = 0x80

        in r0, SWITCHES
        st [panel], r0
        and r0, 3               ; the route
        shl r0                  ; two bytes per table entry
        li x, fares
        call pick               ; A <- the single fare of the route
        ld r2, [panel]
        and r2, RETURN
        jz priced
        shl r0                  ; a return: twice the fare ...
        rol r1
        sub r0, 50              ; ... less 50p
        sbc r1, 0
priced:
        st [fare], r0
        st [fare + 1], r1
        pause
        .expect [fare] == lo(860), [fare + 1] == hi(860)

        ld r0, [panel]          ; "return to Far Ness, 860p each"
        and r0, RETURN
        li x, text_single
        jz say_kind
        li x, text_return
say_kind:
        call print_str
        ld r0, [panel]
        and r0, 3
        shl r0
        li x, names
        call pick
        mov r7, r0              ; x <- the name's address
        mov r6, r1
        call print_str
        li x, text_comma
        call print_str
        ld r0, [fare]
        ld r1, [fare + 1]
        call print_u16
        li x, text_each
        call print_str

group:
        call read_number        ; A <- the next group size, z set at the end
        jz receipt
        ld r2, [passengers]
        add r2, r0
        st [passengers], r2
        ld r2, [groups]
        inc r2
        st [groups], r2
        out LAMPS, r2
        push r0
        li x, text_group
        call print_str
        pop r0
        push r0
        li r1, 0
        call print_u16
        li x, text_colon
        call print_str
        pop r0
        li r1, 0
        ld r2, [fare]
        ld r3, [fare + 1]
        call mul16
        ld r2, [total]
        ld r3, [total + 1]
        add r2, r0
        adc r3, r1
        st [total], r2
        st [total + 1], r3
        call print_u16
        call pence
        jmp group

receipt:
        ld r0, [groups]
        li r1, 0
        call print_u16
        li x, text_groups
        call print_str
        ld r0, [passengers]
        li r1, 0
        call print_u16
        li x, text_passengers
        call print_str
        ld r0, [total]
        ld r1, [total + 1]
        call print_u16
        call pence
        halt
        .expect lamps == 3, [groups] == 3, [passengers] == 49
        .expect [total] == lo(42140), [total + 1] == hi(42140)
        .expect out == "return to Far Ness, 860p each\ngroup of 12: 10320p\ngroup of 7: 6020p\ngroup of 30: 25800p\n3 groups, 49 passengers, 42140p\n"

; pick: A <- the word at x + r0 (r0 < 256). Uses x.
pick:
        add r7, r0
        adc r6, 0
        ld r0, [x]
        inc x
        ld r1, [x]
        ret

; read_number: the next decimal number of the input stream into r0 (up to
; 255); z = 1 when the stream ended before any digit. Uses r0-r2.
read_number:
        li r2, 0                ; digits seen
        li r1, 0                ; the value so far
read_next:
        in r0, INPUT_READY
        cmp r0, 0
        jz read_end
        in r0, INPUT
        cmp r0, '0'
        jc read_separator       ; borrow: below '0'
        cmp r0, '9' + 1
        jnc read_separator
        sub r0, '0'
        push r0
        mov r0, r1              ; value <- value * 10 + digit
        shl r1                  ;   value * 2
        shl r0
        shl r0
        shl r0                  ;   value * 8
        add r1, r0
        pop r0
        add r1, r0
        inc r2
        jmp read_next
read_separator:
        cmp r2, 0
        jz read_next            ; separators before a number are skipped
read_end:
        mov r0, r1
        cmp r2, 0
        jz read_done            ; z = 1: no number
        li r2, 1
        cmp r2, 0               ; z = 0: a number in r0
read_done:
        ret

pence:
        li r0, 'p'
        out CONSOLE, r0
        jmp newline

fares:  .word 240, 310, 455, 600
names:  .word name_skerry, name_holm, name_ness, name_light
name_skerry: .byte "Skerry Isle", 0
name_holm:   .byte "Holm", 0
name_ness:   .byte "Far Ness", 0
name_light:  .byte "the lighthouse", 0
text_single: .byte "single to ", 0
text_return: .byte "return to ", 0
text_comma:  .byte ", ", 0
text_each:   .byte "p each\n", 0
text_group:  .byte "group of ", 0
text_colon:  .byte ": ", 0
text_groups: .byte " groups, ", 0
text_passengers: .byte " passengers, ", 0
panel:      .byte 0
fare:       .word 0
groups:     .byte 0
passengers: .byte 0
total:      .word 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
