//! Options shared by several subcommands and the rendering helpers.
