// CRC-16/CCITT-FALSE one bit at a time, straight from the published parameters (width 16,
// polynomial 0x1021, initial value 0xFFFF, no input or output reflection, final xor 0x0000;
// check value "123456789" -> 0x29B1), as io/rig_protocol.md gives it to firmware authors: the
// tests' independent reference for the table-driven io::Crc16CcittFalse and for encoded lines.
#ifndef LOOPWRIGHT_TESTS_IO_BITWISE_CRC_H_
#define LOOPWRIGHT_TESTS_IO_BITWISE_CRC_H_

#include <cstdint>
#include <string_view>

namespace lw::test {

inline std::uint16_t BitwiseCrc(std::string_view bytes) {
  std::uint16_t crc = 0xFFFF;
  for (unsigned char byte : bytes) {
    crc ^= static_cast<std::uint16_t>(byte << 8);
    for (int bit = 0; bit < 8; ++bit) {
      crc = (crc & 0x8000) ? static_cast<std::uint16_t>((crc << 1) ^ 0x1021)
                           : static_cast<std::uint16_t>(crc << 1);
    }
  }
  return crc;
}

}  // namespace lw::test

#endif  // LOOPWRIGHT_TESTS_IO_BITWISE_CRC_H_
