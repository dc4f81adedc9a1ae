"""Reading: the only code that opens input files (container sniffing, XML guard, package parts,
sheet reader); errors of zipfile, lxml and openpyxl are translated here."""
