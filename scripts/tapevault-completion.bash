# Tab completion of the tapevault command in bash. Load it in your shell (README.md, "Using the command line"):
#   source scripts/tapevault-completion.bash
# Each Tab asks the program itself, through System.CommandLine's [suggest:POSITION] directive, which commands,
# options and values (profiles, channels, encodings, roles) fit where the cursor is; bash keeps those that begin with
# the word being typed, and offers file names where the program has nothing to suggest.
_tapevault_complete() {
  local word="${COMP_WORDS[COMP_CWORD]}"
  local suggestions
  suggestions="$(tapevault "[suggest:${COMP_POINT}]" "${COMP_LINE}" 2>/dev/null)" || return 0
  local IFS=$'\n'
  COMPREPLY=($(compgen -W "${suggestions}" -- "${word}"))
}
complete -o default -o bashdefault -F _tapevault_complete tapevault
