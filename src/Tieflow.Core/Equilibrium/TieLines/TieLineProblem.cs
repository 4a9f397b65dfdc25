namespace Tieflow.Core.Equilibrium.TieLines;

/// <summary>One thing wrong with a table of experimental tie lines.</summary>
/// <param name="Index">Zero-based position of the tie line in the list, or -1 for a problem of the whole table
/// (too few lines). Messages number tie lines from 1, as people do.</param>
/// <param name="Message">What is wrong and what was expected, for example "tie line 3 crosses tie line 4".</param>
public sealed record TieLineProblem(int Index, string Message);
