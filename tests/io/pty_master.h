// A pseudo-terminal for the link tests: its master end plays the rig, its slave path is what
// OpenRigLink opens (the serial transport).
#ifndef LOOPWRIGHT_TESTS_IO_PTY_MASTER_H_
#define LOOPWRIGHT_TESTS_IO_PTY_MASTER_H_

#include <doctest/doctest.h>
#include <fcntl.h>
#include <stdlib.h>

#include <string>

namespace lw::test {

// Opens a master, sets `slave` to its slave path and returns the master descriptor.
inline int OpenPtyMaster(std::string& slave) {
  int master = posix_openpt(O_RDWR | O_NOCTTY);
  REQUIRE(master >= 0);
  REQUIRE(grantpt(master) == 0);
  REQUIRE(unlockpt(master) == 0);
  slave = ptsname(master);
  return master;
}

}  // namespace lw::test

#endif  // LOOPWRIGHT_TESTS_IO_PTY_MASTER_H_
