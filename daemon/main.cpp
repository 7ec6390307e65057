// daemon/main.cpp: the `ampledger` command line.
#include <cstdio>

int main() {
  std::puts("ampledger");
  return 0;
}
