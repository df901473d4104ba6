using System.Runtime.CompilerServices;

// The tests check internal numerical helpers (normal distribution, MAD) against reference libraries.
[assembly: InternalsVisibleTo("PanelRound.Core.Tests")]
