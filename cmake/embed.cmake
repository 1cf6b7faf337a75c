# embed.cmake - turn a text file into a C string:
#   cmake -DIN=.. -DOUT=.. -DNAME=.. [-DSTRIP_PATTERNS=ON] -P embed.cmake
# With STRIP_PATTERNS the schema's regular-expression facets are left out of
# the compiled-in copy: layerwise checks ids and numbers in code, with
# plainer messages, and the regular expressions were most of the cost of
# validating a large model.  docs/model.xsd keeps them for XML editors.
file(READ "${IN}" text)
if(STRIP_PATTERNS)
  string(REGEX REPLACE "<xs:pattern value=\"[^\"]*\"/>" "" text "${text}")
endif()
file(WRITE "${OUT}.txt" "${text}")
file(READ "${OUT}.txt" content HEX)
file(REMOVE "${OUT}.txt")
string(REGEX REPLACE "([0-9a-f][0-9a-f])" "0x\\1," content "${content}")
file(WRITE "${OUT}" "/* generated from ${IN}; do not edit */\nconst char ${NAME}[] = {${content} 0x00};\n")
