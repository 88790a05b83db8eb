from loopdocs.cli import main

main()
