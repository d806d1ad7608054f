; timetable.asm — the summer timetable of the Gullhaven–Skerry Isle ferry.
;
; The first boat leaves at 06:40 and one leaves every 35 minutes after it
; until 20:00; the crossing takes 25 minutes. Times are kept as minutes
; since midnight (16 bits) and printed as HH:MM through nested calls:
; print_time -> div16 (minutes / 60) and print_2d.
;
; Expected values: computed in Python,
;   departures = range(400, 1201, 35)            -> 23 sailings, last 1170 (19:30)
;   rows of four "HH:MM>HH:MM" (arrival = departure + 25), joined by two spaces.
; tests/test_programs.py recomputes the whole console text.

FIRST    = 6 * 60 + 40
EVERY    = 35
CROSSING = 25
LAST     = 20 * 60
PER_ROW  = 4

        li r0, lo(FIRST)
        li r1, hi(FIRST)
        st [departure], r0
        st [departure + 1], r1
sailing:
        call print_sailing
        ld r0, [count]
        inc r0
        st [count], r0
        and r0, PER_ROW - 1     ; a new row after every fourth sailing
        jz end_row
        li r0, ' '
        out CONSOLE, r0
        out CONSOLE, r0
        jmp next
end_row:
        call newline
next:
        ld r0, [departure]
        ld r1, [departure + 1]
        add r0, EVERY
        adc r1, 0
        st [departure], r0
        st [departure + 1], r1
        cmp r0, lo(LAST + 1)    ; 16-bit compare with LAST + 1: borrow means still in time
        sbc r1, hi(LAST + 1)
        jc sailing
        pause
        .expect [count] == 23, [departure] == lo(1205), [departure + 1] == hi(1205)
        .expect out == "06:40>07:05  07:15>07:40  07:50>08:15  08:25>08:50\n09:00>09:25  09:35>10:00  10:10>10:35  10:45>11:10\n11:20>11:45  11:55>12:20  12:30>12:55  13:05>13:30\n13:40>14:05  14:15>14:40  14:50>15:15  15:25>15:50\n16:00>16:25  16:35>17:00  17:10>17:35  17:45>18:10\n18:20>18:45  18:55>19:20  19:30>19:55  "

        call newline
        ld r0, [count]
        li r1, 0
        call print_u16
        li x, text_sailings
        call print_str
        halt
        .expect out == "06:40>07:05  07:15>07:40  07:50>08:15  08:25>08:50\n09:00>09:25  09:35>10:00  10:10>10:35  10:45>11:10\n11:20>11:45  11:55>12:20  12:30>12:55  13:05>13:30\n13:40>14:05  14:15>14:40  14:50>15:15  15:25>15:50\n16:00>16:25  16:35>17:00  17:10>17:35  17:45>18:10\n18:20>18:45  18:55>19:20  19:30>19:55  \n23 sailings\n"
        .expect sp == 0

; print_sailing: "HH:MM>HH:MM" for the departure in [departure].
print_sailing:
        ld r0, [departure]
        ld r1, [departure + 1]
        call print_time
        li r0, '>'
        out CONSOLE, r0
        ld r0, [departure]
        ld r1, [departure + 1]
        add r0, CROSSING
        adc r1, 0
        jmp print_time          ; its ret returns for us

; print_time: A (r1:r0, minutes since midnight) as HH:MM. Uses r0-r5.
print_time:
        li r2, 60
        li r3, 0
        call div16              ; A <- hours, r4 <- minutes
        push r4
        call print_2d
        li r0, ':'
        out CONSOLE, r0
        pop r0
        jmp print_2d

departure: .word 0
count:     .byte 0
text_sailings: .byte " sailings\n", 0

        .include "lib/math16.inc"
        .include "lib/print.inc"
