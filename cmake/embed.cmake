# Turns a text file into a C source defining `const char NAME[]` with its contents.
# Usage: cmake -DIN=file -DOUT=file.c -DNAME=symbol -P embed.cmake
file(READ "${IN}" text)
string(REPLACE "\\" "\\\\" text "${text}")
string(REPLACE "\"" "\\\"" text "${text}")
string(REPLACE "\n" "\\n\"\n\"" text "${text}")
file(WRITE "${OUT}.tmp" "/* Generated from ${IN} at build time; edit that file instead. */\nconst char ${NAME}[] =\n\"${text}\";\n")
file(RENAME "${OUT}.tmp" "${OUT}")
