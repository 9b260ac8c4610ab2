// Driver for tests/reference/rig_protocol_vs_python.py: reads commands on stdin, one per line,
// and answers each on one line of stdout.
//   C BODY      -> the CRC-16/CCITT-FALSE of BODY as 4 hex digits
//   E HEXFLOAT  -> EncodeRigLine of "u 0 VALUE" (without its newline)
//   P LINE      -> the parse status word; for a valid sample also T_US and R U Y as %a
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <string>

#include "io/rig_protocol.h"

int main() {
  std::string command;
  while (std::getline(std::cin, command)) {
    if (command.size() < 2) return 2;
    const std::string arg = command.substr(2);
    switch (command[0]) {
      case 'C':
        std::printf("%04X\n", lw::Crc16CcittFalse(arg));
        break;
      case 'E': {
        std::string line =
            lw::EncodeRigLine(lw::RigMessage::Actuator(0, std::strtod(arg.c_str(), nullptr)));
        line.pop_back();
        std::printf("%s\n", line.c_str());
        break;
      }
      case 'P': {
        const lw::RigParseResult r = lw::ParseRigLine(arg);
        std::string word(lw::RigParseStatusText(r.status));
        for (char& c : word) c = c == ' ' ? '_' : c;
        std::printf("%s", word.c_str());
        if (r.status == lw::RigParseStatus::kOk && r.message.kind == lw::RigMessageKind::kSample) {
          const lw::RigSample& s = r.message.sample;
          std::printf(" %llu %a %a %a", static_cast<unsigned long long>(s.t_us), s.reference,
                      s.actuator, s.output);
        }
        std::printf("\n");
        break;
      }
      default:
        return 2;
    }
    std::fflush(stdout);
  }
  return 0;
}
