using System.Diagnostics.CodeAnalysis;
using System.Runtime.CompilerServices;

namespace TapeVault.Core.Common;

/// <summary>Argument guards that throw from a non-inlined method, so the callers' hot paths stay small.</summary>
public static class Preconditions
{
    public static void CheckArgument(bool condition, string message, [CallerArgumentExpression(nameof(condition))] string? expression = null)
    {
        if (!condition)
        {
            ThrowArgument(message, expression);
        }
    }

    public static void CheckFinite(double value, [CallerArgumentExpression(nameof(value))] string? name = null)
    {
        if (!double.IsFinite(value))
        {
            ThrowArgument("must be a finite number", name);
        }
    }

    [DoesNotReturn]
    [MethodImpl(MethodImplOptions.NoInlining)]
    private static void ThrowArgument(string message, string? expression) =>
        throw new ArgumentException($"{message} ({expression})");
}
