# embed.cmake - turn a text file into a C string: cmake -DIN=.. -DOUT=.. -DNAME=.. -P embed.cmake
file(READ "${IN}" content HEX)
string(REGEX REPLACE "([0-9a-f][0-9a-f])" "0x\\1," content "${content}")
file(WRITE "${OUT}" "/* generated from ${IN}; do not edit */\nconst char ${NAME}[] = {${content} 0x00};\n")
