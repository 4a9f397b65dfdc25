using Tieflow.Core.Cascade;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Reconciliation;
using Tieflow.Files;

namespace Tieflow.Service.Cli;

/// <summary>The one place where exceptions of a command become exit codes and messages on standard error.</summary>
internal static class CommandRunner
{
    public static int Run(CliContext context, Func<int> handler)
    {
        try
        {
            return handler();
        }
        catch (InputException e)
        {
            context.ReportProblems(e.Problems, ExitCodes.BadInput);
            return ExitCodes.BadInput;
        }
        catch (CliUsageException e)
        {
            context.ReportFailure("error", e.Message, ExitCodes.BadInput);
            return ExitCodes.BadInput;
        }
        catch (Exception e) when (IsComputationFailure(e))
        {
            context.ReportFailure("could not compute", e.Message, ExitCodes.ComputationFailed);
            return ExitCodes.ComputationFailed;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or TimeoutException or System.Net.Sockets.SocketException)
        {
            // Runtime failures of the machine or the network: the message says what could not be done.
            context.ReportFailure("failed", e.Message, ExitCodes.RuntimeFailure);
            return ExitCodes.RuntimeFailure;
        }
        catch (Exception e)
        {
            // Last resort at the process boundary: a defect must still end with a message and a non-zero code, not a stack dump.
            context.ReportFailure("internal error", $"({e.GetType().Name}) {e.Message}", ExitCodes.RuntimeFailure);
            return ExitCodes.RuntimeFailure;
        }
    }

    /// <summary>Failures of the calculation itself, as opposed to bad input or I/O.</summary>
    private static bool IsComputationFailure(Exception e) => e is EquilibriumException or CascadeException or InfeasibleSpecificationException or ReconciliationException or ArithmeticException;
}
