; berths.asm — the harbour board of visiting boats.
;
; The harbourmaster keeps the names of the visiting boats as a list of
; zero-terminated strings (an empty string ends the list). For the board
; outside the office, every name is turned to capitals in place and printed
; with its length; then the longest name is shown, and the list is searched
; for the boat that radioed ahead. All string work goes through the pointer
; x; comparing two strings swaps x between two pointers kept in memory.
;
; Expected values: computed in Python,
;   names = ['Kittiwake', 'Puffin', 'Sea Holly', 'Marram', 'Dunlin II']
;   lines f"{n.upper()} {len(n)}", max(names, key=len) -> the first longest,
;   names.index('Puffin') + 1 -> berth 2.

        li x, names
board_next:
        ld r0, [x]
        cmp r0, 0
        jz board_done           ; the empty string ends the list
        st [start], r7          ; x = r6:r7, the name being shown
        st [start + 1], r6
        li r2, 0                ; its length
upper:
        ld r0, [x]
        cmp r0, 0
        jz upper_done
        inc r2
        cmp r0, 'a'
        jc upper_keep           ; borrow: below 'a'
        cmp r0, 'z' + 1
        jnc upper_keep          ; no borrow: above 'z'
        sub r0, 'a' - 'A'
        st [x], r0
upper_keep:
        inc x
        jmp upper
upper_done:
        inc x                   ; past the 0: the next name
        st [next], r7
        st [next + 1], r6
        st [length], r2
        ld r3, [best_length]
        cmp r3, r2
        jnc not_longer          ; no borrow: the best so far is as long
        st [best_length], r2
        ld r0, [start]
        st [best], r0
        ld r0, [start + 1]
        st [best + 1], r0
not_longer:
        ld r7, [start]
        ld r6, [start + 1]
        call print_str
        li r0, ' '
        out CONSOLE, r0
        ld r0, [length]
        li r1, 0
        call print_u16
        call newline
        ld r7, [next]
        ld r6, [next + 1]
        jmp board_next
board_done:
        pause
        .expect [best_length] == 9, [best] == lo(names), [best + 1] == hi(names)
        .expect out == "KITTIWAKE 9\nPUFFIN 6\nSEA HOLLY 9\nMARRAM 6\nDUNLIN II 9\n"

        li x, text_longest
        call print_str
        ld r7, [best]
        ld r6, [best + 1]
        call print_str
        call newline

        li x, names             ; find the boat that radioed ahead
        li r0, 1
        st [berth], r0
search:
        st [start], r7
        st [start + 1], r6
        st [p], r7
        st [p + 1], r6
        li r0, lo(wanted)
        st [q], r0
        li r0, hi(wanted)
        st [q + 1], r0
        call same
        jz found
        ld r7, [start]          ; not this one: on to the end of the name
        ld r6, [start + 1]
skip:
        ld r0, [x]
        inc x
        cmp r0, 0
        jnz skip
        ld r0, [berth]
        inc r0
        st [berth], r0
        ld r0, [x]
        cmp r0, 0
        jnz search
        halt                    ; not on the list (this program's data has it)
found:
        li x, wanted
        call print_str
        li x, text_berth
        call print_str
        ld r0, [berth]
        li r1, 0
        call print_u16
        call newline
        halt
        .expect [berth] == 2, sp == 0
        .expect out == "KITTIWAKE 9\nPUFFIN 6\nSEA HOLLY 9\nMARRAM 6\nDUNLIN II 9\nlongest: KITTIWAKE\nPUFFIN is at berth 2\n"

; same: z = 1 when the strings at [p] and [q] are equal. Both pointers
; move to just past the last character compared. Uses r0, r1 and x.
same:
        ld r7, [p]
        ld r6, [p + 1]
        ld r0, [x]
        inc x
        st [p], r7
        st [p + 1], r6
        ld r7, [q]
        ld r6, [q + 1]
        ld r1, [x]
        inc x
        st [q], r7
        st [q + 1], r6
        cmp r0, r1
        jnz same_done           ; z = 0: they differ
        cmp r0, 0
        jnz same                ; equal so far, not yet at the end
same_done:                      ; z = 1 here when both ended together
        ret

names:
        .byte "Kittiwake", 0
        .byte "Puffin", 0
        .byte "Sea Holly", 0
        .byte "Marram", 0
        .byte "Dunlin II", 0
        .byte 0
wanted:       .byte "PUFFIN", 0
text_longest: .byte "longest: ", 0
text_berth:   .byte " is at berth ", 0
start:        .word 0
next:         .word 0
best:         .word 0
best_length:  .byte 0
length:       .byte 0
berth:        .byte 0
p:            .word 0
q:            .word 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
