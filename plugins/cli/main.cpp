// `critplex SUBCOMMAND ...`: dispatches to the registered subcommands.
#include <cstdio>
#include <cstring>
#include <exception>

#include "cli.hpp"

using namespace critplex_cli;

static void print_overview() {
  std::printf("critplex %s: topology of functional brain networks\n\n", cpx_version());
  std::printf("usage: critplex COMMAND [arguments] [options]\n\ncommands:\n");
  for (const auto& [name, command] : commands()) std::printf("  %-10s %s\n", name.c_str(), command.summary.c_str());
  std::printf("\n'critplex COMMAND --help' describes a command.\n");
  std::printf("Research software, not a medical device: not for clinical decisions.\n");
}

int main(int argc, char** argv) {
  if (argc < 2 || !std::strcmp(argv[1], "--help") || !std::strcmp(argv[1], "-h") || !std::strcmp(argv[1], "help")) {
    print_overview();
    return argc < 2 ? 2 : 0;
  }
  if (!std::strcmp(argv[1], "--version")) {
    std::printf("critplex %s (ABI %d)\n", cpx_version(), cpx_abi_version());
    return 0;
  }
  auto it = commands().find(argv[1]);
  if (it == commands().end()) {
    std::fprintf(stderr, "critplex: unknown command '%s' (see critplex --help)\n", argv[1]);
    return 2;
  }
  const Command& command = it->second;
  for (int i = 2; i < argc; ++i)
    if (!std::strcmp(argv[i], "--help") || !std::strcmp(argv[i], "-h")) {
      std::fputs(help_text(command).c_str(), stdout);
      return 0;
    }
  install_interrupt_cleanup();
  try {
    Args args = parse_args(command, argc - 2, argv + 2);
    return command.run(args);
  } catch (const Failure& f) {
    std::fprintf(stderr, "critplex %s: %s\n", command.name.c_str(), f.what());
    return f.code;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "critplex %s: internal error: %s\n", command.name.c_str(), e.what());
    return 1;
  }
}
